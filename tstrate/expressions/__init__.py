"""Rate and thermochemistry expressions: one module per form, each fitting, evaluating and describing itself.

- :mod:`~tstrate.expressions.arrhenius`: Arrhenius and modified Arrhenius k(T)
- :mod:`~tstrate.expressions.chebyshev`: Chebyshev k(T) and k(T, P)
- :mod:`~tstrate.expressions.troe`: Troe falloff k(T, [M]) (:class:`TroeFit`, its fitting)
- :mod:`~tstrate.expressions.pressure_table`: modified Arrhenius expressions at tabulated pressures
- :mod:`~tstrate.expressions.nasa7`: NASA 7-coefficient polynomials
- :mod:`~tstrate.expressions.mechanism_text`: numbers and units of the Cantera YAML blocks

Each form evaluates itself (``rate(T, P)``; Troe ``rate(T, [M])``; NASA-7 ``cp``, ``h``, ``s``),
gives a plain SI record (``to_record``) and is rebuilt from it (``from_record``), and writes the
Cantera YAML lines of its rate (``mechanism_block``).

Rate constants are SI per molecule (s^-1, m^3 s^-1, m^6 s^-1 by order); temperatures K,
pressures Pa, molar energies J/mol.
"""
