"""Readers of a study file's optional sections, one module per section.

Each reader gets the whole parsed study file (a :class:`~tstrate.io.tables.Table`) and the
study read so far, and returns the validated settings stored in ``Study.sections``.
"""
