"""`schedcheck report`: not yet written."""
