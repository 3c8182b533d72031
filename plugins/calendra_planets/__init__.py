"""calendra plugin: planets."""
