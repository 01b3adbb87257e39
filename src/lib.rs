//! # tauwise
//!
//! Oscillator and clock stability analysis. tauwise reduces the two kinds of
//! measurement a timing engineer has — time-domain phase or frequency records
//! from a time-interval counter or TIE capture, and phase-noise tables L(f)
//! from a phase-noise analyser — to one consistent stability picture
//! (σ_y(τ) with confidence intervals, the power-law noise model behind it),
//! and turns that picture into decisions: integrated jitter in a band,
//! MTIE/TDEV wander against network masks, and holdover time error.
//!
//! The library never prints, never exits and never reads the command line;
//! the `tauwise` binary is a thin layer over it.
//!
//! Layers (see `DEVELOPERS.md`):
//! - [`units`] — parse and format durations, frequencies, SI prefixes, dB.
//! - [`record`] — phase and fractional-frequency records, gaps as NaN.
//! - [`io`] — readers (time series, L(f) tables, DUT files) and atomic writers.
//! - [`prepare`] — drift, outliers, gaps, decimation.
//! - [`tau`] — averaging-factor grids.
//! - [`deviation`] — the σ(τ) estimators and their registry [`deviation::Estimator`].
//! - [`stats`] — EDF, confidence intervals, noise identification.
//! - [`model`] — the power-law noise model (IEEE Std 1139) and its fit.
//! - [`spectrum`] — PSD estimation, L(f)/S_φ/S_y/S_x, σ(τ) from spectra, jitter.
//! - [`wander`] — TIE statistics, MTIE, TDEV, masks.
//! - [`holdover`] — time-error prediction through a holdover span.
//! - [`verdict`] — the verdict vocabulary every check shares (meets / exceeds / not judged).
//! - [`simulate`] — power-law noise synthesis (Kasdin & Walter 1992).
//! - [`plot`] — charts; [`report`] — the self-contained HTML report.

pub mod deviation;
pub mod error;
pub mod holdover;
pub mod io;
pub mod model;
pub mod plot;
pub mod prepare;
pub mod record;
pub mod report;
pub mod results;
pub mod simulate;
pub mod spectrum;
pub mod stability;
pub mod stats;
pub mod tau;
pub mod units;
pub mod verdict;
pub mod wander;

pub use error::{Error, Result};
pub use record::{DataKind, FrequencyRecord, PhaseRecord, Record};

/// The tool name written into every JSON document.
pub const TOOL: &str = "tauwise";
/// The crate version written into every JSON document.
pub const VERSION: &str = env!("CARGO_PKG_VERSION");

/// The caution printed beside every output that feeds a decision.
pub const DECISION_CAUTION: &str = "Engineering estimate: the governing standard, the \
equipment maker's data and the operator's own acceptance procedure decide.";
