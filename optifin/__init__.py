"""optifin: multi-objective design optimisation of air-cooled plate-fin heat sinks."""

__version__ = "0.1.0"
