"""Materials: the library of grades and their values, and what a material's name tells."""
