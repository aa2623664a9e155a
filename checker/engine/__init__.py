"""The checks, in three parts below the orchestrator :mod:`checker.engine.run`:

- :mod:`checker.engine.expressions`: the safe expression parser and the dimension algebra
  shared by rule files and stated formulas;
- :mod:`checker.engine.regime`: rules over solved values (load and validate rule files,
  solve every calculation, decide where assumptions are made and where rules fire, for
  single points and sweeps alike);
- :mod:`checker.engine.formulas`: analysis of the formulas a calculation states (their
  symbols, the exact relations and named limits, which limits make a formula hold, its
  value at the operating point).

``findings``, ``waivers``, ``vocabulary`` and ``number_text`` are shared by both parts.
"""
