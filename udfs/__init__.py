"""cellwright: spreadsheet functions for electrochemical cell sizing and costing."""
