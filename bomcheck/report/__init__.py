"""Report stage: the report value, its JSON form, release-to-release diff and where-used."""
