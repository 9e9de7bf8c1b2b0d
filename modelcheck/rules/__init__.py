"""rules stage of the pipeline."""
