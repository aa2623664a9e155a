"""Declarative rule files of regimecheck (installed as ``checker.rules``)."""
