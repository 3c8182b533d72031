"""calendra plugin: solver."""
