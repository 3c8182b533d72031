"""calendra plugin: sweeps of detectors over large grids on Dask."""
