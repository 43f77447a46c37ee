"""The record wing: the step record each filtering leaves in the data (its written
format is ``step.schema.json``), the history read back from it, the methods
paragraph and the BIDS entry made from it, the export of a filtered recording, and a
filter recipe (the curve and apply's options) as a small file."""
