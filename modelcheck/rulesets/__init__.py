"""Data package: rule sets, material library and shape tables (TOML/CSV), shipped with modelcheck."""
