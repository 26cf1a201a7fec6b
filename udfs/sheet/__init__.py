"""The spreadsheet face."""
