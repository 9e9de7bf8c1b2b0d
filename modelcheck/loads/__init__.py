"""loads stage of the pipeline."""
