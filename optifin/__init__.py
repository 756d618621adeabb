"""optifin: multi-objective design optimisation of air-cooled heat sinks (plate and pin fins).

The public API (``load_problem``, ``evaluate_designs``, ``optimise``, ``write_run``,
``draw``) is imported on first use, so that ``import optifin`` stays cheap.
"""

__version__ = "0.1.0"

_API = (
    "design_from_values",
    "draw",
    "evaluate_designs",
    "load_problem",
    "optimise",
    "screen_catalog",
    "study_materials",
    "write_run",
)
__all__ = ["__version__", *_API]


def __getattr__(name):
    if name in _API:
        from optifin import api

        return getattr(api, name)
    raise AttributeError(f"module 'optifin' has no attribute {name!r}")
