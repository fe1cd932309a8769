"""Rate and thermochemistry expressions: one module per form, each fitting, evaluating and describing itself.

- :mod:`~tstrate.expressions.arrhenius`: Arrhenius and modified Arrhenius k(T)
- :mod:`~tstrate.expressions.chebyshev`: Chebyshev k(T) and k(T, P)
- :mod:`~tstrate.expressions.troe`: Troe falloff k(T, [M])
- :mod:`~tstrate.expressions.nasa7`: NASA 7-coefficient polynomials

Rate constants are SI per molecule (s^-1, m^3 s^-1, m^6 s^-1 by order); temperatures K,
pressures Pa, molar energies J/mol.
"""
