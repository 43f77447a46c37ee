"""The filtering wing: a design run on data. Arrays by FFT multiplication (padding,
segments, row blocks), MNE's Raw, Epochs and Evoked (picks, discontinuities,
``info``), recordings too long for memory, and a filter recipe as a small file."""
