"""calendra plugin: solver -- dating a record by the sky it describes.

A record (a TOML file) lists sky observations and relations between them;
``calendra date RECORD.toml`` (or :func:`calendra_solver.engine.date_record`)
finds the dates on which they all hold, over a search window, ranked, with
residuals, visibility margins and their delta-T sensitivity.  The solver
knows detectors and calendars only through their protocols, so it works with
any installed plugin.

Record schema (complete reference with every key: ``SCHEMA.md`` beside this file)
---------------------------------------------------------------------------------
``[record]``
    ``window`` (required: ``"FROM..TO"`` or ``[FROM, TO]``, years or dates in any
    form calendra reads), ``site`` (gazetteer name or ``LAT,LON[,ELEV]``),
    ``title``, ``source``, ``note``, ``delta_t`` (model name), ``eras`` (era files
    with reign lists, relative to the record), ``lunisolar`` (lunisolar calendar
    files, relative to the record, read by the lunisolar plugin), ``top``
    (solutions shown).
``[record.delta_t_sweep]``
    ``mode`` (``near`` default, ``full``, ``off``), ``n_sigma`` (2), ``steps`` (5),
    ``match_days`` (3).
``[[observation]]``
    ``id`` and ``detector`` (required), ``params`` (the detector's declared
    parameters), ``text``, ``site`` (``record``, ``none`` or a site), ``kind``
    (kinds to keep), ``where`` (``"umbral_mag >= 0.5 and seen == 'yes'"``: a
    parsed mini-language of comparisons joined by and/or, never evaluated as
    code), ``margin`` (a visibility-margin column, with a ``scale``),
    ``chunk_years``, ``weight``.
``[[observation.require]]``
    ``column`` with ``min``/``max`` (plus a soft ``tolerance``), ``target`` with
    ``tolerance``, ``equals`` or ``one_of``; residuals in the column's unit.
``[observation.date]``
    ``calendar`` (any installed calendar or one of the era or lunisolar files), any of its
    fields (only those the source gives: ``month = 2, day = 14``, year
    unknown), ``ruler`` (for reign lists: "year 7 of ruler R"),
    ``tolerance_days`` (0..30), ``not_before``, ``not_after``.
``[[relation]]``
    ``interval`` (``from``, ``to``, ``days`` +- ``plus_minus``, or ``min_days``..``max_days``),
    ``before`` (``first``, ``then``, ``max_days``), ``after`` (``observation``,
    ``reference``), ``same-year`` and ``consecutive-years`` (``observations``,
    ``calendar``), ``years-after`` (``from``, ``to``, ``years``, ``calendar``),
    ``regnal`` (``calendar``, ``epoch``, ``between``, ``step_days``: how the free
    epoch of a reign list with an uncertain accession is searched).

Units and time scales: instants are Julian Days in TT (``jd_tt``), UT1 through
the delta-T model (``jd_ut``); day counts of relations are between instants, in
days; a calendar date is the day the calendar gives the instant at the
observation's site; angles and margins are in the detector's units (degrees).

Stages (modules): :mod:`.schema` (reading, one-line errors), :mod:`.filters`
(column conditions), :mod:`.candidates` (detector runs in chunks, filters),
:mod:`.dates` (date information, free epochs), :mod:`.join` (relations as
edges, the vectorized join, contradictions), :mod:`.solve` (one delta-T
scenario, the score), :mod:`.sensitivity` (delta-T re-runs, matching
solutions across scenarios), :mod:`.engine` (the whole run), :mod:`.describe`
and :mod:`.report` (output), :mod:`.command` (``calendra date``).
"""
