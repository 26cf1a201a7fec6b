"""Stop with ``MemoryError`` before a C library runs out of address space.

Under a cap on the address space (``ulimit -v``, ``RLIMIT_AS``, as some batch
systems and containers set), an allocation that fails inside Python raises a
clean ``MemoryError``; one that fails inside libexpat can leave the parser
looping instead of returning (seen with libexpat 2.5.0 while a large sheet was
read with about 75 MiB left). Code that feeds a C parser calls
:func:`ensure_headroom` between chunks: when less than :data:`MIN_HEADROOM`
of the cap is left it raises ``MemoryError`` itself, which the command
reports as "out of memory" on one line. Without a cap (the usual case), or
where the process's mapped size cannot be read (not Linux), it does nothing.

>>> ensure_headroom()  # no cap here: nothing to do
"""

from __future__ import annotations

__all__ = ["MIN_HEADROOM", "ensure_headroom"]

try:
    import resource
except ImportError:  # Windows: no address-space caps of this kind
    resource = None  # type: ignore[assignment]

#: Address space that must be left when a C parser is given its next chunk: far more
#: than what one chunk's callbacks allocate (a chunk of 64 KiB of XML makes well under
#: 1 MiB of objects).
MIN_HEADROOM = 16 * 1024 * 1024


def _mapped_bytes(page: int) -> int | None:
    """The process's mapped size (Linux), None where it cannot be read."""
    try:
        with open("/proc/self/statm", encoding="ascii") as fh:
            return int(fh.read().split()[0]) * page
    except (OSError, ValueError, IndexError):
        return None


def ensure_headroom(minimum: int = MIN_HEADROOM) -> None:
    """Raise ``MemoryError`` when an address-space cap leaves less than ``minimum``."""
    if resource is None:
        return
    cap = resource.getrlimit(resource.RLIMIT_AS)[0]
    if cap == resource.RLIM_INFINITY:
        return
    mapped = _mapped_bytes(resource.getpagesize())
    if mapped is not None and cap - mapped < minimum:
        raise MemoryError(f"less than {minimum >> 20} MiB of address space left")
