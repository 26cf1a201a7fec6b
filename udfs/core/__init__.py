"""The computational core: floats and numpy arrays in and out, no spreadsheet,
file or command-line knowledge."""
