"""Words the input readers and the rule engine share, kept below both so that neither
imports the other (the engine would otherwise load the calculation reader, the
materials and their models just to know a word list):

- ASSUMPTIONS: the trade words an author may declare in a calculation (``assumes:``)
  and a rule may be triggered by (``applies: declared:``);
- TOLERANCE_NAMES: the measured-number tolerances of the configuration
  (``[tool.regimecheck.tolerance]``); a rule file names the one that sets its
  threshold (``indicator: tolerance:``), so the configuration never names a rule;
- SEVERITIES: the severities of a finding, lowest first (a rule file's ``severity``,
  the configuration's fail level, the reports' ranking and colours).
"""

ASSUMPTIONS = (
    "non-degenerate",
    "full-ionization",
    "no-compensation",
    "single-carrier",
    "extrinsic",
    "einstein-relation",
    "diffusive",
    "low-field",
)

TOLERANCE_NAMES = (
    "resistivity",
    "hall_density",
    "diffusivity",
    "mobility",
    "carrier_density",
    "drift_velocity",
    "mean_free_path",
    "resistance",
)

SEVERITIES = ("info", "warning", "error")
SEVERITY_RANK = {word: rank for rank, word in enumerate(SEVERITIES)}
