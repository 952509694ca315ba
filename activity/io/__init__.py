"""Input and output at the edge: units, recipes, tables, output files (text → SI)."""
