"""Safe files: atomic writes, no overwrite without force, clear errors, nothing lost."""

from __future__ import annotations

import errno
import os
import stat
from pathlib import Path

import pytest

from udfs.xlsx import files
from udfs.xlsx.file_errors import FileSafetyError
from udfs.xlsx.files import atomic_writer, check_output, read_input, write_bytes_atomic


def _leftovers(directory):
    return [p.name for p in directory.iterdir() if p.name.endswith(".tmp")]


def test_write_then_refuse_then_force(tmp_path):
    out = tmp_path / "out.bin"
    write_bytes_atomic(out, b"first")
    with pytest.raises(FileSafetyError, match="already exists; add --force"):
        write_bytes_atomic(out, b"second")
    assert out.read_bytes() == b"first"
    write_bytes_atomic(out, b"second", force=True)
    assert out.read_bytes() == b"second"
    assert _leftovers(tmp_path) == []


def test_new_files_follow_the_umask(tmp_path):
    out = tmp_path / "mode.bin"
    old = os.umask(0o022)
    try:
        write_bytes_atomic(out, b"x")
    finally:
        os.umask(old)
    assert stat.S_IMODE(out.stat().st_mode) == 0o644


def test_output_may_never_be_the_input(tmp_path):
    src = tmp_path / "in.xlsx"
    src.write_bytes(b"precious")
    for target in (src, tmp_path / "." / "in.xlsx"):
        with pytest.raises(FileSafetyError, match="is the input file"):
            write_bytes_atomic(target, b"oops", force=True, inputs=[src])
    assert src.read_bytes() == b"precious"


def test_missing_directory_and_directory_as_output(tmp_path):
    with pytest.raises(FileSafetyError, match="does not exist"):
        check_output(tmp_path / "nope" / "out.xlsx")
    with pytest.raises(FileSafetyError, match="is a directory"):
        check_output(tmp_path)


@pytest.mark.skipif(os.geteuid() == 0, reason="root may write into read-only directories")
def test_read_only_directory(tmp_path):
    ro = tmp_path / "ro"
    ro.mkdir()
    ro.chmod(0o500)
    try:
        with pytest.raises(FileSafetyError, match="not writable"):
            write_bytes_atomic(ro / "out.xlsx", b"x")
    finally:
        ro.chmod(0o700)


def test_read_only_directory_as_seen_by_the_check(tmp_path, monkeypatch):
    # works as root too: the check consults os.access, which we make say "no"
    monkeypatch.setattr(files.os, "access", lambda *a, **k: False)
    with pytest.raises(FileSafetyError, match="not writable"):
        check_output(tmp_path / "out.xlsx")


def test_disk_full_leaves_the_old_file_intact(tmp_path, monkeypatch):
    out = tmp_path / "out.bin"
    out.write_bytes(b"old")

    def full(fd):
        raise OSError(errno.ENOSPC, "No space left on device")

    monkeypatch.setattr(files.os, "fsync", full)
    with pytest.raises(FileSafetyError, match="disk is full; any existing file is unchanged"):
        write_bytes_atomic(out, b"new" * 1000, force=True)
    assert out.read_bytes() == b"old"
    assert _leftovers(tmp_path) == []


@pytest.mark.parametrize("exc", [RuntimeError("crash"), KeyboardInterrupt()])
def test_interrupted_write_leaves_the_old_file_intact(tmp_path, exc):
    out = tmp_path / "out.bin"
    out.write_bytes(b"old")
    with pytest.raises(type(exc)), atomic_writer(out, force=True) as fh:
        fh.write(b"half")
        raise exc
    assert out.read_bytes() == b"old"
    assert _leftovers(tmp_path) == []


def test_a_file_appearing_meanwhile_is_not_clobbered(tmp_path):
    out = tmp_path / "race.bin"
    with pytest.raises(FileSafetyError, match="already exists"), atomic_writer(out) as fh:
        fh.write(b"mine")
        out.write_bytes(b"theirs")  # someone else wrote it while we were writing
    assert out.read_bytes() == b"theirs"
    assert _leftovers(tmp_path) == []


def test_read_input_errors(tmp_path):
    with pytest.raises(FileSafetyError, match="no such file"):
        read_input(tmp_path / "vanished.xlsx", 100)
    with pytest.raises(FileSafetyError, match="is a directory"):
        read_input(tmp_path, 100)
    big = tmp_path / "big.xlsx"
    big.write_bytes(b"x" * 101)
    with pytest.raises(FileSafetyError, match="larger than"):
        read_input(big, 100)
    assert read_input(big, 101) == b"x" * 101


@pytest.mark.skipif(os.geteuid() == 0, reason="root reads unreadable files")
def test_unreadable_input(tmp_path):
    locked = tmp_path / "locked.xlsx"
    locked.write_bytes(b"x")
    locked.chmod(0)
    try:
        with pytest.raises(FileSafetyError, match="permission denied"):
            read_input(locked, 100)
    finally:
        locked.chmod(0o600)


def test_locked_input_as_seen_by_the_reader(tmp_path, monkeypatch):
    src = tmp_path / "locked.xlsx"
    src.write_bytes(b"x")

    def denied(*a, **k):
        raise PermissionError(errno.EACCES, "Permission denied")

    monkeypatch.setattr("builtins.open", denied)
    with pytest.raises(FileSafetyError, match="cannot be read: permission denied"):
        read_input(src, 100)


# ------------------------------------------------------------------ signals during a write
#
# A child process writes a large file through atomic_writer and receives a real signal:
# from this process while it writes, or from itself the moment the temporary file exists
# (the window a Ctrl-C used to hit) or while the finished file is moved into place.

_SIGNAL_CHILD = r"""
import os, signal, sys, tempfile, time
from udfs.xlsx.files import WriteInterrupted, atomic_writer

out, mode = sys.argv[1], sys.argv[2]
if mode == "at-create":  # Ctrl-C right after the temporary file is created
    real_mkstemp = tempfile.mkstemp

    def mkstemp(*args, **kwargs):
        made = real_mkstemp(*args, **kwargs)
        os.kill(os.getpid(), signal.SIGINT)
        return made

    tempfile.mkstemp = mkstemp
if mode == "at-commit":  # SIGTERM while the finished file is moved into place
    real_link = os.link

    def link(src, dst, **kwargs):
        real_link(src, dst, **kwargs)
        os.kill(os.getpid(), signal.SIGTERM)

    os.link = link
chunk = os.urandom(1 << 20)
try:
    with atomic_writer(out) as fh:
        for i in range(16):  # 16 MiB at once
            fh.write(chunk)
        if mode == "external":
            print("writing", flush=True)
            for _ in range(200):  # then slowly, until the signal comes (10 s at most)
                fh.write(chunk)
                time.sleep(0.05)
except WriteInterrupted as exc:
    print(exc.exit_code, exc, flush=True)
    sys.exit(exc.exit_code)
print("finished", flush=True)
"""


def _signal_child(out, mode):
    import subprocess
    import sys

    root = str(Path(__file__).resolve().parents[2])
    env = dict(os.environ, PYTHONPATH=root)
    return subprocess.Popen(
        [sys.executable, "-c", _SIGNAL_CHILD, str(out), mode],
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        text=True,
        env=env,
    )


@pytest.mark.parametrize("sig", ["SIGTERM", "SIGHUP", "SIGINT"])
def test_a_signal_during_a_write_removes_the_temporary_file(tmp_path, sig):
    import signal

    signum = getattr(signal, sig)
    out = tmp_path / "big.bin"
    child = _signal_child(out, "external")
    assert child.stdout is not None
    assert child.stdout.readline().strip() == "writing"
    assert len(_leftovers(tmp_path)) == 1  # the temporary file, 16 MiB and growing
    child.send_signal(signum)
    stdout, stderr = child.communicate(timeout=60)
    assert stdout.strip() == f"{128 + signum} stopped by {sig}; big.bin was not written", stderr
    assert child.returncode == 128 + signum
    assert _leftovers(tmp_path) == [] and not out.exists()


def test_ctrl_c_right_after_the_temporary_file_is_created(tmp_path):
    out = tmp_path / "big.bin"
    child = _signal_child(out, "at-create")
    stdout, stderr = child.communicate(timeout=60)
    assert stdout.strip() == "130 stopped by SIGINT; big.bin was not written", stderr
    assert child.returncode == 130
    assert _leftovers(tmp_path) == [] and not out.exists()


def test_a_signal_during_the_final_move_lets_the_move_finish(tmp_path):
    out = tmp_path / "big.bin"
    child = _signal_child(out, "at-commit")
    stdout, stderr = child.communicate(timeout=60)
    assert stdout.strip() == "143 stopped by SIGTERM; big.bin was written in full", stderr
    assert child.returncode == 143
    assert _leftovers(tmp_path) == [] and out.stat().st_size == 16 << 20


def test_signal_handlers_are_restored_after_a_write(tmp_path):
    import signal

    before = {s: signal.getsignal(s) for s in files.STOP_SIGNALS}
    write_bytes_atomic(tmp_path / "a.bin", b"x")
    with pytest.raises(RuntimeError), atomic_writer(tmp_path / "b.bin") as fh:
        fh.write(b"y")
        raise RuntimeError("crash")
    assert {s: signal.getsignal(s) for s in files.STOP_SIGNALS} == before
