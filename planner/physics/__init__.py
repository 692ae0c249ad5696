"""Pure, vectorised acoustic physics: floats or numpy arrays in, the same out.

No IO, no logging, no user interface. Units are in the names. Each function cites
its source in its docstring; tests check it against published or worked values.
"""
