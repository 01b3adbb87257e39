//! Welch PSD estimation of phase records (placeholder being written).
