"""Print the coefficient reference page: ``python -m gvflow.coefficients > docs/coefficients.md``."""

from gvflow.coefficients import markdown

print(markdown(), end="")
