"""Words shared by the uncertainty-study modules (the study, its files, plots and
report): kept apart so that they import it and not each other."""
from __future__ import annotations

#: said beside every probability and percentile of a study
UNCERTAINTY_CAUTION = (
    "A probability or percentile from this study is only as good as the distributions "
    "stated for its inputs: it covers the inputs made uncertain and nothing else (not the "
    "error of the model itself, nor inputs held at fixed values).")
#: the overall chance of crossing any limit is listed under this name
ANY_LIMIT = "any design limit"

__all__ = ["ANY_LIMIT", "UNCERTAINTY_CAUTION"]
