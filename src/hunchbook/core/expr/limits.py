"""Size limits that keep parsing and evaluating any expression quick and safe."""

#: Longest accepted expression text, in characters.
MAX_LENGTH = 2_000
#: Most syntax nodes (numbers, names, operators, calls, ...) in one expression.
MAX_NODES = 500
#: Deepest nesting of sub-expressions (parentheses, operators, calls) in one expression.
MAX_DEPTH = 50
#: Longest window or lag, in bars.
MAX_WINDOW = 100_000
#: Largest absolute value of a constant exponent after ``**``.
MAX_EXPONENT = 10
