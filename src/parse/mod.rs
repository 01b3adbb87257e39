//! One parser per concept: the values people write on the command line and
//! in DUT files, as types implementing [`std::str::FromStr`]. The binary's
//! clap definitions use them as `value_parser`s and the DUT reader
//! ([`crate::io::dut`]) calls the same functions, so that a text accepted (or
//! refused) by one entry point is accepted (or refused) by all.
//!
//! | concept | type | examples |
//! |---|---|---|
//! | duration | [`Duration`] | `1s`, `100ms`, `150fs`, `24h`, `2d`, `1week` |
//! | frequency | [`Frequency`] | `10MHz`, `156.25M`, `12k`, `1mHz`, `5µHz` |
//! | fractional frequency | [`Fraction`] | `1e-9`, `2ppb`, `-0.5ppt` |
//! | rate (fractional frequency per time) | [`Rate`] | `1ppb/day`, `5e-11/week`, `5e-11/24h` |
//! | probability (confidence level) | [`Probability`] | `0.683`, `0.95` |
//! | weighting filter | [`Filter`] | `highpass:1:12k`, `lp:2:20MHz` |
//! | measurement filter on time error | [`TeFilter`] | `lowpass:0.1Hz`, `highpass:2:100mHz` |
//! | estimator list | [`EstimatorList`] | `oadev,mdev` |
//! | power-law model | [`Model`] | `h0=1e-22,h-1=3e-26,fh=0.5` |
//! | τ grid | [`crate::tau::TauGrid`] | `octave`, `log:10`, `1,10,100s,1h` |
//! | τ range | [`parse_tau_range`] | `1s:3h` |
//! | count | [`count`], [`points`] | `2000`, `1e6` |
//! | time column | [`TimeColumn`] | `1`, `none` |
//! | raw binary element type | [`BinaryFormat`] | `f64le`, `f32be` |
//! | temperature | [`temp_coeff`], [`temp_swing`] | `1e-11/K`, `5K` |
//!
//! Every refusal is a [`crate::units::UnitError`] naming the text and what
//! was expected.

mod estimators;
mod filter;
mod model;
mod options;
mod quantity;
mod te_filter;

pub use crate::io::binary::BinaryFormat;
pub use estimators::EstimatorList;
pub use filter::{Filter, FILTER_ORDERS};
pub use model::Model;
pub use options::{
    comment_chars, count, kelvin, mad_limit, non_negative_fraction, overlap_fraction,
    parse_tau_range, points, snap_fraction, temp_coeff, temp_swing, time_column, TimeColumn,
};
pub use quantity::{uncertainty_db, Duration, Fraction, Frequency, Probability, Rate};
pub use te_filter::TeFilter;
