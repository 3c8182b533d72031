"""calendra plugin: sweeps of detectors over large grids on Dask.

``calendra sweep SPEC.toml [--workers N] [--scheduler ADDRESS] [--output DIR] [--resume] [--serial] [--check]``

A sweep runs one job -- an installed event detector (or another job kind)
-- over a grid of sites x objects x parameter values x delta-T variants x
year spans.  The grid is cut into chunks, each one array job (one grid point
over one span of years: one call of the detector's ``search``), and the
chunks run on a Dask cluster (:mod:`distributed`): a local cluster of N
worker processes on this machine, or an existing cluster named by its
scheduler address.  ``--serial`` runs them in this process without Dask:
the reference that every cluster run equals byte for byte.  Each chunk is
written atomically (temporary file + :func:`os.replace`) as soon as it is
done; ``--resume`` skips the chunks already written, so an interrupted
sweep loses nothing; a chunk whose worker dies is run again by Dask.  The
run ends with ``summary.csv`` (printed as a table), ``manifest.json`` and,
for a latitude/longitude grid with ``[output.plot]``, a map-like PNG.

API: :func:`calendra_sweep.spec.load_spec` (check a spec),
:func:`calendra_sweep.runner.make_plan` (its chunks),
:func:`calendra_sweep.runner.run_sweep` (run it); job kinds in
:mod:`calendra_sweep.jobs`; fault injection for checking a cluster in
:mod:`calendra_sweep.testing`; sizing for a real cluster in ``SIZING.md``.

The sweep spec (TOML)
---------------------
Relative paths are taken from the spec's folder (``--output`` from the
working directory).  Every key is checked before any work starts; a problem
is one line naming the file and the key, e.g.
``atlas.toml: [grid] sites: the list is empty (an empty grid has nothing to run)``.

::

    title = "Sirius and Spica at three sites"     # optional, shown in the manifest and plot

    [job]
    kind = "detector"            # job kind (default "detector"; see below)
    detector = "heliacal"        # any installed detector ('calendra events --list')
    delta_t = "smh2016"          # delta-T model (default smh2016; constant:S, table:PATH, ...)
    margin_days = 45             # days searched beyond each chunk on both sides (default 45, 0..400)
    sites_file = "sites.toml"    # optional extra gazetteer (TOML site tables, see calendra.sites)

    [job.parameters]             # fixed parameters of the detector, with their declared types
    phase = "rising"
    method = "arcus"

    [grid]
    sites = ["Babylon", "Memphis", "31.2,29.9,20"]   # gazetteer names or LAT,LON[,ELEVATION_M]
    objects = ["Sirius", "Spica"]   # swept values of the detector's object parameter
    object_parameter = "object"     # which parameter 'objects' sweeps (default: object, body,
                                    # planet or targets, the first the detector declares)
    years = [-3000, 3000]           # [FROM, TO): astronomical years (0 = 1 BC), TO exclusive;
                                    # or a list of ranges [[-3000, -2000], [-1000, 0]]
    chunk_years = 500               # years per chunk (default 100; the last may be shorter)
    delta_t_offset_s = [-600, 0, 600]   # swept: seconds added to the model's delta T
    # delta_t = ["smh2016", "ms2004"]   # swept models instead of [job] delta_t

    [grid.parameters]            # swept detector parameters: a list of values each
    arcus = [9.0, 11.0]          # degrees (the detector's own units)

    [grid.latlon]                # a raster of sites (together with or instead of 'sites')
    latitude = [20, 50]          # [FROM, TO] degrees north, both included
    longitude = [-10, 60]        # [FROM, TO] degrees east
    step = 5                     # degrees; or latitude_step and longitude_step
    elevation = 0                # metres

    [output]
    folder = "atlas-out"         # created if missing; must be writable
    format = "csv"               # the only format: chunks are CSV files

    [output.plot]                # only with [grid.latlon]; without it a raster gets map.png of the
                                 # rows per cell; 'plot = false' in [output] draws nothing
    file = "map.png"             # PNG in the output folder
    value = "day_of_year"        # a numeric column of the rows, day_of_year (local mean-time
                                 # civil day of the year, western calendar, 1 = 1 January) or count
    statistic = "median"         # mean, median, min, max or count over a cell's rows
    axes = "map"                 # map: latitude x longitude; latitude-epoch: latitude x middle year
                                 # of each chunk, pooled over longitudes
    where = { kind = "first-crescent" }    # keep only the rows whose columns have these values
    title = "..."

The grid is the product of sites, delta-T models, delta-T offsets and the
swept parameter values (in the order written), and each grid point is run
over every span of years.  A detector that takes no site (``seasons``,
``lunar-phases``, ``eclipses`` ...) has no sites in its grid.

Output folder
-------------
``chunks/KEY.csv``
    One file per chunk.  ``KEY`` is readable (site, values, years) and ends
    with a hash of everything that determines the chunk (job, fixed
    parameters, site, values, span), so a changed spec never reuses an old
    chunk.  Columns: the grid point (``grid_site``, ``grid_latitude_deg``,
    ``grid_longitude_deg``, ``grid_elevation_m``, ``grid_<parameter>``,
    ``grid_delta_t``, ``grid_delta_t_offset_s`` -- those that apply) then the
    detector's own columns (``jd_tt``, ``jd_ut``, ``kind`` and the rest, in
    the detector's units).  Rows are the events with ``jd_tt`` in the
    chunk's span, 0h TT 1 January of ``year_from`` (inclusive) to that of
    ``year_to`` (exclusive), western calendar, trimmed to the ephemeris; the
    detector searches the span widened by ``margin_days``, so that an event
    near a chunk edge comes out as in one long search.  Floats are written
    in their shortest exact form (``repr``).
``summary.csv``
    One row per grid point: ``chunks``, ``rows``, ``first_jd_ut``,
    ``last_jd_ut`` (Julian Days, UT), ``kinds`` (events of each kind) and the
    plot's statistic when a plot is asked for.
``manifest.json``
    The job, every chunk with its years, whether it is done and its compute
    time on the worker (s), the workers, versions and provenance.

Job kinds
---------
``detector``
    As above.
``alignment-batch`` and ``chronology``
    Registered when the alignment and solver plugins are installed; see
    :mod:`calendra_sweep.kinds_extra` for their keys.
"""
