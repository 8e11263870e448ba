"""One module per subcommand; see `grower.cli` for the contract."""
