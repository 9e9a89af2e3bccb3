"""Engineering studies over whole simulations: sweeps and target seeking.

The public entry points are :func:`cvsim.sweep` and :func:`cvsim.seek` (exported
lazily by ``cvsim/__init__.py``). Inside, one job per module:

    sweep.py     varied values (lists, ranges, grids), cases, the sweep itself
    seek.py      requirements and the search for the smallest or largest value
    outcomes.py  the named figures of one run (table columns, requirement names)
    table.py     SweepResult: columns, rows, CSV/JSON/text files
    parallel.py  local worker processes or a Dask cluster
    plot.py      the sweep plot (outcomes against the varied value)
    cli.py       ``cvsim sweep``, ``cvsim find``, ``cvsim outcomes``
    uncertainty.py   uncertainty studies (:func:`cvsim.uncertainty`), with
                 sampling.py (designs), statistics.py (percentiles, probabilities),
                 sensitivity.py (rank correlations, Sobol' indices),
                 uncertainty_files.py, uncertainty_plot.py, uncertainty_report.py
                 and uncertainty_cli.py (``cvsim uncertainty``)

A sub-package rather than ``cvsim/sweep.py``: a module ``cvsim.sweep`` and the
function ``cvsim.sweep`` cannot share a name (importing the module would
replace the function on the package).
"""
