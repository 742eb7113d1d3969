"""A corpus of workbooks from other writers, damaged and hostile files, made at test time."""
