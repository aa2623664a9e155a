"""The quantities regimecheck knows, each defined once, and how they are written.

Below the input readers and the engine (it imports only physics constants and the shared
words), so both read it:

- :mod:`.registry`: every quantity once (name, meaning, dimension by its display unit,
  how it is produced, per carrier or not, its YAML key, its trade symbols); the rule
  vocabulary, the calculation file's keys, the formula-symbol map and the JSON Schema
  are views of it;
- :mod:`.display_units`: the trade units quantities are shown in, and what each measures;
- :mod:`.summary_fields`: the trade-unit summary of a solved point (the ``state`` object
  of the JSON reports and its console labels);
- :mod:`.number_text`: how an SI number is written in a display unit.
"""
