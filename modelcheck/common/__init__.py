"""What every stage shares: the project's errors, units, the table contracts, file guards, data paths."""
