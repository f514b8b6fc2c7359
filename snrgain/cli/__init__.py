"""The ``snrgain`` command line: one module per subcommand."""
