//! Pitch tracking: f0 per frame from mono samples (YIN and pYIN).
