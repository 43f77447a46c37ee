"""The shaping wing: a gain curve, the kernel realized from it at a sampling rate, and
that kernel measured in the field's terms (cutoffs, roll-off, stop bands, time
behaviour). NumPy and SciPy only: nothing here knows about MNE or plots."""
