"""calendra plugin: lunar and solar eclipses."""
