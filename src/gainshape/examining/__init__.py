"""The examining wing: what a filter did or would do to the data, measured. Band power
before and after, narrow lines in the spectrum and the notches for them, and what a
filter does to steps, pulses and ERP-like waveforms (xarray results)."""
