"""Semi-empirical route (GFN2-xTB via tblite and ASE): minima, saddle points, water relays.

Modules: :mod:`engine` (calculator, optimisers, finite-difference Hessian),
:mod:`minima`, :mod:`saddle`, :mod:`relay`, :mod:`connectivity`, :mod:`cache`,
:mod:`stationary`. Heavy packages are imported inside functions.
"""
