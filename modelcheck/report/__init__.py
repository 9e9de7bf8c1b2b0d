"""report stage of the pipeline."""
