"""The plan: the user's roles and settings, column types, and the analyses they imply."""
