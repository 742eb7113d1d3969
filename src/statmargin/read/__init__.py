"""Reading: cells of a data sheet into a Table of typed columns with notes about skipped cells."""
