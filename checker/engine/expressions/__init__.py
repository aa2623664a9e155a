"""Safe parsing of expressions (rule files, stated formulas) and their dimension algebra."""
