"""Designs: how each kind of question is prepared, which test it takes and how it is run."""
