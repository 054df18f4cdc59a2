"""Post-processing: beam-analogy diagrams (idealized methods); later line cuts,
classification and envelopes."""
