//! The coupled air/plate correction and the air check against a measured A0.
//!
//! Two-oscillator model (G. Caldersmith, J. Acoust. Soc. Am. 63:1566, 1978;
//! O. Christensen and B. B. Vistisen, J. Acoust. Soc. Am. 68(3):758–766,
//! 1980). With the hole open the air and the top plate form two coupled
//! resonances f− < f+; with the hole sealed the plate alone (stiffened by the
//! trapped air) rings at f_c. Then
//!
//! f−² + f+² = f_h² + f_c²  and  f−·f+ = f_h·f_t,
//!
//! so the uncoupled rigid-wall Helmholtz frequency is
//! f_h = √(f−² + f+² − f_c²) and the plate alone f_t = f−·f+/f_h.
//! The coupling matrix is symmetric, so its eigenvalues f−², f+² bracket its
//! diagonal entries f_h², f_c²: a sealed-hole resonance outside [f−, f+] is
//! inconsistent with the model and is refused.
//!
//! The measured A0 is f−; the walls pull it below f_h by f_h − f−.

use serde::{Deserialize, Serialize};

use super::{check_frequency_hz, AcousticsError};
use crate::analysis::pitch::cents_between;

/// Result of the two-oscillator correction.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct CoupledCorrection {
    /// Uncoupled (rigid-wall) Helmholtz frequency f_h, Hz.
    pub helmholtz_hz: f64,
    /// Uncoupled plate frequency f_t, Hz.
    pub plate_hz: f64,
    /// How far the walls pull A0 (= f−) below f_h, Hz (positive = pulled down).
    pub wall_pull_hz: f64,
    /// The same pull in cents, from f_h to f− (negative = pulled down).
    pub wall_pull_cents: f64,
}

/// Derives the uncoupled Helmholtz and plate frequencies from the coupled
/// pair `f_minus_hz` < `f_plus_hz` (hole open) and `f_sealed_hz` (hole
/// sealed), which must lie between them.
pub fn coupled_correction(
    f_minus_hz: f64,
    f_plus_hz: f64,
    f_sealed_hz: f64,
) -> Result<CoupledCorrection, AcousticsError> {
    check_frequency_hz("lower coupled resonance", f_minus_hz)?;
    check_frequency_hz("upper coupled resonance", f_plus_hz)?;
    check_frequency_hz("sealed-hole plate resonance", f_sealed_hz)?;
    if f_minus_hz >= f_plus_hz {
        return Err(AcousticsError::CoupledPairOutOfOrder {
            f_minus_hz,
            f_plus_hz,
        });
    }
    // Strict bounds keep f_h² > f−² > 0 and f_h > 0 below.
    if !(f_minus_hz < f_sealed_hz && f_sealed_hz < f_plus_hz) {
        return Err(AcousticsError::SealedOutsidePair {
            f_sealed_hz,
            f_minus_hz,
            f_plus_hz,
        });
    }
    let helmholtz_squared =
        f_minus_hz * f_minus_hz + f_plus_hz * f_plus_hz - f_sealed_hz * f_sealed_hz;
    let helmholtz_hz = helmholtz_squared.sqrt();
    let plate_hz = f_minus_hz * f_plus_hz / helmholtz_hz;
    Ok(CoupledCorrection {
        helmholtz_hz,
        plate_hz,
        wall_pull_hz: helmholtz_hz - f_minus_hz,
        wall_pull_cents: cents_between(helmholtz_hz, f_minus_hz),
    })
}

/// A measured A0 set against an estimate.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct AirCheck {
    /// The measured A0, Hz.
    pub measured_hz: f64,
    /// The estimate it is compared with, Hz.
    pub estimated_hz: f64,
    /// measured − estimated, Hz.
    pub difference_hz: f64,
    /// From estimated to measured, cents (negative = measured is lower).
    pub difference_cents: f64,
}

/// Compares a measured A0 with an estimate (for example the rigid-wall
/// Helmholtz frequency), in Hz and cents.
pub fn compare_with_measured(
    measured_a0_hz: f64,
    estimated_hz: f64,
) -> Result<AirCheck, AcousticsError> {
    check_frequency_hz("measured A0", measured_a0_hz)?;
    check_frequency_hz("estimated frequency", estimated_hz)?;
    Ok(AirCheck {
        measured_hz: measured_a0_hz,
        estimated_hz,
        difference_hz: measured_a0_hz - estimated_hz,
        difference_cents: cents_between(estimated_hz, measured_a0_hz),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn refuses_inconsistent_inputs() {
        assert!(matches!(
            coupled_correction(200.0, 100.0, 150.0),
            Err(AcousticsError::CoupledPairOutOfOrder { .. })
        ));
        assert!(matches!(
            coupled_correction(100.0, 100.0, 100.0),
            Err(AcousticsError::CoupledPairOutOfOrder { .. })
        ));
        for sealed in [90.0, 100.0, 200.0, 250.0] {
            assert!(matches!(
                coupled_correction(100.0, 200.0, sealed),
                Err(AcousticsError::SealedOutsidePair { .. })
            ));
        }
        assert!(coupled_correction(f64::NAN, 200.0, 150.0).is_err());
        assert!(compare_with_measured(-3.0, 100.0).is_err());
    }

    #[test]
    fn air_check_signs() {
        let check = compare_with_measured(100.0, 200.0).unwrap();
        assert_eq!(check.difference_hz, -100.0);
        // An octave is 1200 cents (equal temperament, common practice).
        assert!((check.difference_cents + 1200.0).abs() < 1e-9);
    }
}
