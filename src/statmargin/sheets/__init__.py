"""Sheet models of the tool's sheets, laid out independent of the file format; sharing mode."""
