"""The studies wing: a recipe run over every recording of a study (BIDS or a folder),
one task each, locally or on a Dask cluster, resumable, with a summary and a report."""
