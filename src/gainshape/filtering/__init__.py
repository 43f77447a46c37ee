"""The filtering wing: a design run on data. Arrays by FFT multiplication (padding,
segments, row blocks), MNE's Raw, Epochs and Evoked (picks, discontinuities,
``info``), and recordings too long for memory."""
