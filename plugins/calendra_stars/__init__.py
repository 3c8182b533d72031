"""calendra plugin: stars."""
