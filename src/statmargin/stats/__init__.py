"""Statistical tests: each module takes plain numpy arrays and returns a ``Result``."""
