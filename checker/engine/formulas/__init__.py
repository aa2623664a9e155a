"""Analysis of stated formulas: symbols, exact relations and limits, recognition, values."""
