"""Walking a study: each step takes a :class:`~tstrate.model.Study` and calls the pure physics.

- :mod:`~tstrate.study.run`: :func:`compute_study`, the whole job, returning a :class:`StudyResult`
- :mod:`~tstrate.study.rates`, :mod:`~tstrate.study.routes`, :mod:`~tstrate.study.falloff`,
  :mod:`~tstrate.study.excitations`, :mod:`~tstrate.study.fits`: one step each

This is where an error raised by physics about one of its parameters is placed in the study
file (its section and key), once.
"""
