"""calendra plugin: lunisolar."""
