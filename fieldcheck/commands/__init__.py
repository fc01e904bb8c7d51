"""One module per subcommand; see :mod:`fieldcheck.cli` for the contract."""
