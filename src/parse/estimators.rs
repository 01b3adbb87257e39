//! Lists of estimators (`--dev oadev,mdev`), by the registry's names.

use crate::deviation::Estimator;
use crate::units::UnitError;
use std::fmt;
use std::str::FromStr;

/// Estimators named by a comma-separated list, each through
/// [`Estimator::from_name`] (case and spaces ignored). A repeated name is
/// kept once, in the order of its first appearance; an empty list, an empty
/// entry (`oadev,,mdev`) or an unknown name is refused.
///
/// ```
/// use tauwise::deviation::Estimator;
/// use tauwise::parse::EstimatorList;
/// let l: EstimatorList = "oadev, mdev,oadev".parse().unwrap();
/// assert_eq!(l.0, vec![Estimator::Oadev, Estimator::Mdev]);
/// assert!("oadev,,mdev".parse::<EstimatorList>().is_err());
/// ```
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct EstimatorList(pub Vec<Estimator>);

impl FromStr for EstimatorList {
    type Err = UnitError;
    fn from_str(text: &str) -> Result<Self, UnitError> {
        let mut out = Vec::new();
        for part in text.split(',') {
            if part.trim().is_empty() {
                return Err(UnitError::EmptyEntry {
                    text: text.to_string(),
                    what: "estimator names",
                    example: "oadev,mdev",
                });
            }
            let e = Estimator::from_name(part).map_err(|e| UnitError::Invalid {
                text: part.trim().to_string(),
                reason: e.to_string(),
            })?;
            if !out.contains(&e) {
                out.push(e);
            }
        }
        Ok(EstimatorList(out))
    }
}

impl fmt::Display for EstimatorList {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let names: Vec<&str> = self.0.iter().map(|e| e.name()).collect();
        write!(f, "{}", names.join(","))
    }
}

impl std::ops::Deref for EstimatorList {
    type Target = [Estimator];
    fn deref(&self) -> &[Estimator] {
        &self.0
    }
}
