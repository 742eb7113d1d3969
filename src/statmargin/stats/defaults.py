"""Run-wide defaults of the tests, in a module that imports nothing heavy.

``plan.model.Settings`` takes them from here, so reading a roles sheet does
not load SciPy. Monte Carlo p-values are reproducible run to run.
"""

DEFAULT_SEED = 20261202
DEFAULT_RESAMPLES = 20000
