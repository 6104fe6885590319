"""`schedcheck audit`: not yet written."""
