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
//! # Example
//!
//! Read a phase record, take out its aging, compute OADEV with confidence
//! intervals and the noise type at each τ, and fit the power-law model
//! (the same calls the `stability` and `noise` commands make; the runnable
//! version with a printed table is `examples/file_to_model.rs`):
//!
//! ```
//! use std::path::Path;
//! use tauwise::io::series::{read_series, SeriesOptions};
//! use tauwise::model::PowerLaw;
//! use tauwise::prepare::{fit_drift, remove_drift, DriftModel};
//! use tauwise::stability::fit_record_model;
//! use tauwise::tau::TauGrid;
//! use tauwise::units::{PhaseUnit, ValueUnit};
//!
//! // Two days of phase in ns at τ0 = 1 s: the bundled demo record, made by
//! // `tauwise simulate` from h2 = 7.9e-25, h0 = 2e-24, h-1 = 6.5e-26,
//! // h-2 = 1e-31 with an aging of 2e-11 per day.
//! let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-data/ocxo-a-phase.txt");
//! let opts = SeriesOptions {
//!     unit: Some(ValueUnit::Phase(PhaseUnit::Ns)),
//!     tau0: Some(1.0),
//!     ..Default::default()
//! };
//! let series = read_series(&path, &opts)?;
//!
//! // Remove the linear frequency drift (least squares on y, NIST SP 1065 §5).
//! let drift = fit_drift(&series.record, DriftModel::Linear)?;
//! let phase = remove_drift(&series.record, &drift).to_phase();
//!
//! // OADEV and MDEV on the octave grid with 68.3 % intervals, and the
//! // power-law model fitted to both.
//! let fitted = fit_record_model(&phase, &TauGrid::Octave)?;
//! let oadev = &fitted.curves[0];
//! let first = &oadev.points[0];
//! let (lo, hi) = (first.lo.unwrap(), first.hi.unwrap());
//! println!("OADEV(1 s) = {:.4e} in [{lo:.4e}, {hi:.4e}], {:?}", first.estimate.value, first.noise());
//!
//! // IEEE Std 1139: the generating model's AVAR at τ = 1 s; a seeded
//! // record of 172 800 points lands within 2 % of it.
//! let truth = PowerLaw { h: [1e-31, 6.5e-26, 2e-24, 0.0, 7.9e-25], f_h: 0.5 };
//! assert!((first.estimate.value / truth.avar(1.0).sqrt() - 1.0).abs() < 0.02);
//!
//! // The fit finds the white FM level within 15 % (seeded simulation).
//! let h0 = fitted.fit.model.h[2];
//! assert!((h0 / 2e-24 - 1.0).abs() < 0.15, "h0 = {h0:e}");
//! # Ok::<(), tauwise::Error>(())
//! ```
//!
//! Layers (`docs/design.md` §3, and `DEVELOPERS.md`):
//! - [`units`] — parse and format durations, frequencies, SI prefixes, dB.
//! - [`parse`] — one parser per concept (duration, frequency, rate, filter,
//!   estimator list, model), shared by the command line and the DUT file.
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
//! - [`separate`] — the stability of each clock from pairwise comparisons (N-cornered hat).
//! - [`timeline`] — σ(τ) in a window sliding along the record (dynamic Allan variance).
//! - [`simulate`] — power-law noise synthesis (Kasdin & Walter 1992).
//! - [`plot`] — charts; [`report`] — the self-contained HTML report.

pub mod decision;
pub mod deviation;
pub mod error;
pub mod holdover;
pub mod io;
pub mod limits;
pub mod model;
pub mod parse;
pub mod plot;
pub mod prepare;
pub mod record;
pub mod report;
pub mod results;
pub mod separate;
pub mod simulate;
pub mod spectrum;
pub mod stability;
pub mod stats;
pub mod tau;
pub mod timeline;
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
