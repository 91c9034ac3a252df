"""Command line: arguments, commands, project configuration."""
