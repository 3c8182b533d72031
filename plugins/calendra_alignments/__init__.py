"""calendra plugin: alignments."""
