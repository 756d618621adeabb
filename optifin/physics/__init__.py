"""Pure, vectorised physics: one module per phenomenon.

Every function broadcasts over numpy arrays (a population axis), takes SI values or the
dimensionless groups a correlation is published in, does no I/O and mutates nothing.
Nothing here imports from :mod:`optifin.model` or above.
"""
