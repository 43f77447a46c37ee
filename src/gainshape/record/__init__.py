"""The record wing: the step record each filtering leaves in the data (its written
format is ``step.schema.json``), the history read back from it, the methods
paragraph and the BIDS entry made from it, and the export of a filtered recording."""
