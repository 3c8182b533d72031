"""calendra plugin: geocentric."""
