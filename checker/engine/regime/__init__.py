"""Rules over solved values: rule files, the solve of every calculation, where rules fire."""
