"""Words the input readers and the rule engine share, kept below both so that neither
imports the other (the engine would otherwise load the calculation reader, the
materials and their models just to know a word list):

- ASSUMPTIONS: the trade words an author may declare in a calculation (``assumes:``)
  and a rule may be triggered by (``applies: declared:``);
- TOLERANCE_NAMES: the measured-number tolerances of the configuration
  (``[tool.regimecheck.tolerance]``); a rule file names the one that sets its
  threshold (``indicator: tolerance:``), so the configuration never names a rule.
"""

ASSUMPTIONS = ("non-degenerate", "full-ionization", "no-compensation", "single-carrier",
               "extrinsic", "einstein-relation", "diffusive", "low-field")

TOLERANCE_NAMES = ("resistivity", "hall_density", "diffusivity", "mobility")
