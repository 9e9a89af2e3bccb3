"""``python -m cvsim.scenario``: print the scenario-format reference (docs/scenario-format.md)."""
from .schema import format_reference

print(format_reference(), end="")
