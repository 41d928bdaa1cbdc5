"""One module per sub-command: add_arguments(parser) and run(args) -> exit code."""
