"""Reports: console (rich) and JSON renderings of solved states (later: findings)."""

DISCLAIMER = (
    "Screening check for engineering review: it does not replace qualified device "
    "characterization or sign-off."
)
