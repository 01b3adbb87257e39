//! Integrated phase jitter (being written).
