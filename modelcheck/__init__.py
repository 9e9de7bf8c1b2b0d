"""modelcheck: batch-check the axial members of IFC building models."""

__version__ = "0.1.0"
