"""One module per ``tidemark`` sub-command; see :data:`tidemark.cli.COMMANDS`."""
