"""plaincount-cli: the main steps without a window. One module per group of commands."""
