"""The caution every result a person could act on carries.

In a module of its own, with nothing to import, so that what only draws or writes text
(the plotting helpers, :mod:`cvsim.plot`) can print it without loading the solver.
"""

CAUTION = ("Screening estimate - verify against the governing codes (e.g. ASME Section VIII, "
           "API 520/521, ISO 4126, ISO 23251, local regulations) and have it reviewed by a "
           "qualified engineer.")

__all__ = ["CAUTION"]
