"""Model-writing helpers for the sample models, the test fixtures and the benchmark (no check reads them)."""
