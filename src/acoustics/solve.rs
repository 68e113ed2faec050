//! The cavity model the other way round: which opening size, or which
//! volume, gives a target Helmholtz frequency.
//!
//! Opening sizes are found by bisection on a bracket (the frequency rises
//! monotonically with the size), from the smallest accepted size up to the
//! largest the area rule allows; the bracket is checked first, so a target
//! out of reach is reported with the reachable range. The volume has a
//! closed form, V = K·(c/(2π f))², since the conductance does not depend on
//! it.

use std::f64::consts::PI;

use super::cavity::{
    estimate_cavity, helmholtz_frequency_hz, CavityGeometry, Opening, MAX_OPENING_SIZE_MM,
    MAX_VOLUME_M3, MIN_OPENING_SIZE_MM, MIN_VOLUME_M3,
};
use super::speed_of_sound::speed_of_sound_m_s;
use super::{check_frequency_hz, AcousticsError};

/// Diameter (mm) of one more round hole that, with the openings already in
/// `others` (possibly none) held fixed, gives `target_hz`.
pub fn solve_round_diameter_mm(
    others: &CavityGeometry,
    target_hz: f64,
) -> Result<f64, AcousticsError> {
    let remaining_area_m2 = remaining_area_m2(others)?;
    let largest_mm = (2e3 * (remaining_area_m2 / PI).sqrt()).min(MAX_OPENING_SIZE_MM);
    solve_added_opening(
        others,
        target_hz,
        "round hole diameter",
        |diameter_mm| Opening::Round { diameter_mm },
        MIN_OPENING_SIZE_MM,
        largest_mm,
    )
}

/// Length (mm) of one more slot of the given mean width that, with the
/// openings already in `others` held fixed, gives `target_hz`.
pub fn solve_slot_length_mm(
    others: &CavityGeometry,
    mean_width_mm: f64,
    target_hz: f64,
) -> Result<f64, AcousticsError> {
    let slot = |length_mm| Opening::Slot {
        length_mm,
        mean_width_mm,
    };
    if !(mean_width_mm.is_finite()
        && (MIN_OPENING_SIZE_MM..MAX_OPENING_SIZE_MM).contains(&mean_width_mm))
    {
        return Err(AcousticsError::OpeningSizeOutOfRange {
            opening: others.openings.len() + 1,
            dimension: "mean width",
            value_mm: mean_width_mm,
        });
    }
    let remaining_area_m2 = remaining_area_m2(others)?;
    let largest_mm = (remaining_area_m2 / (mean_width_mm * 1e-3) * 1e3).min(MAX_OPENING_SIZE_MM);
    // A slot must be longer than it is wide.
    let shortest_mm = mean_width_mm * (1.0 + 1e-6);
    solve_added_opening(
        others,
        target_hz,
        "slot length",
        slot,
        shortest_mm,
        largest_mm,
    )
}

/// Volume (m³) that, with all openings of `geometry` fixed, gives
/// `target_hz`. The geometry's own `volume_m3` is ignored.
pub fn solve_volume_m3(geometry: &CavityGeometry, target_hz: f64) -> Result<f64, AcousticsError> {
    check_frequency_hz("target frequency", target_hz)?;
    // Validate everything except the volume by checking at a placeholder.
    let mut checked = geometry.clone();
    checked.volume_m3 = MAX_VOLUME_M3;
    checked.validate()?;
    let speed_m_s = speed_of_sound_m_s(&geometry.air, geometry.sound_model)?;
    let conductance_m = geometry.total_conductance_m();
    let volume_at = |frequency_hz: f64| {
        let wavelength_over_2pi_m = speed_m_s / (2.0 * PI * frequency_hz);
        conductance_m * wavelength_over_2pi_m * wavelength_over_2pi_m
    };
    let frequency_at = |volume_m3: f64| helmholtz_frequency_hz(speed_m_s, conductance_m, volume_m3);
    let smallest_m3 = MIN_VOLUME_M3.max(geometry.total_area_m2().powf(1.5));
    let volume_m3 = volume_at(target_hz);
    if !(smallest_m3..=MAX_VOLUME_M3).contains(&volume_m3) {
        return Err(AcousticsError::TargetUnreachable {
            what: "volume",
            target_hz,
            lowest_hz: frequency_at(MAX_VOLUME_M3),
            highest_hz: frequency_at(smallest_m3),
        });
    }
    Ok(volume_m3)
}

/// Area still free under the area rule once `others` are in place, m².
/// Also validates everything about `others` except the opening count.
fn remaining_area_m2(others: &CavityGeometry) -> Result<f64, AcousticsError> {
    others.validate_body()?;
    others.validate_openings()?;
    others.validate_area()?;
    Ok(others.area_limit_m2() - others.total_area_m2())
}

/// Bisection on the size of one added opening, in [smallest_mm, largest_mm].
fn solve_added_opening(
    others: &CavityGeometry,
    target_hz: f64,
    what: &'static str,
    make: impl Fn(f64) -> Opening,
    smallest_mm: f64,
    largest_mm: f64,
) -> Result<f64, AcousticsError> {
    check_frequency_hz("target frequency", target_hz)?;
    let with_size = |size_mm: f64| {
        let mut geometry = others.clone();
        geometry.openings.push(make(size_mm));
        geometry
    };
    if largest_mm <= smallest_mm {
        // Not even the smallest opening fits: let the area rule say so.
        estimate_cavity(&with_size(smallest_mm))?;
    }
    let lowest = estimate_cavity(&with_size(smallest_mm))?;
    let speed_m_s = lowest.speed_of_sound_m_s;
    let lowest_hz = lowest.helmholtz_hz;
    let highest_hz = estimate_cavity(&with_size(largest_mm))?.helmholtz_hz;
    if !(lowest_hz..=highest_hz).contains(&target_hz) {
        return Err(AcousticsError::TargetUnreachable {
            what,
            target_hz,
            lowest_hz,
            highest_hz,
        });
    }
    let frequency_at = |size_mm: f64| {
        let geometry = with_size(size_mm);
        helmholtz_frequency_hz(
            speed_m_s,
            geometry.total_conductance_m(),
            geometry.volume_m3,
        )
    };
    Ok(bisect_increasing(
        |size_mm| frequency_at(size_mm) - target_hz,
        smallest_mm,
        largest_mm,
    ))
}

/// Root of an increasing function with f(low) ≤ 0 ≤ f(high), by bisection
/// until the bracket is 1e-12 of its upper end (or stops shrinking).
fn bisect_increasing(f: impl Fn(f64) -> f64, mut low: f64, mut high: f64) -> f64 {
    for _ in 0..200 {
        let middle = 0.5 * (low + high);
        if middle <= low || middle >= high || high - low <= 1e-12 * high {
            break;
        }
        if f(middle) > 0.0 {
            high = middle;
        } else {
            low = middle;
        }
    }
    0.5 * (low + high)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bisection_finds_a_square_root() {
        let root = bisect_increasing(|x| x * x - 2.0, 0.0, 2.0);
        assert!((root - 2f64.sqrt()).abs() < 1e-11);
    }

    #[test]
    fn round_hole_reproduces_target() {
        let mut others = CavityGeometry::new(13e-3, vec![]);
        others.wall_thickness_mm = 2.5;
        for target_hz in [90.0, 120.0, 150.0] {
            let diameter_mm = solve_round_diameter_mm(&others, target_hz).unwrap();
            let mut full = others.clone();
            full.openings.push(Opening::Round { diameter_mm });
            let got = estimate_cavity(&full).unwrap().helmholtz_hz;
            assert!((got - target_hz).abs() < 0.01, "{target_hz}: {got}");
        }
    }

    #[test]
    fn unreachable_targets_are_refused() {
        let others = CavityGeometry::new(13e-3, vec![Opening::Round { diameter_mm: 86.0 }]);
        // The existing hole alone already gives about 140 Hz.
        let e = solve_round_diameter_mm(&others, 100.0).unwrap_err();
        assert!(matches!(e, AcousticsError::TargetUnreachable { .. }), "{e}");
        let e = solve_volume_m3(&others, 1.0).unwrap_err();
        assert!(matches!(e, AcousticsError::TargetUnreachable { .. }), "{e}");
        let e = solve_slot_length_mm(&others, 8.0, f64::NAN).unwrap_err();
        assert!(
            matches!(e, AcousticsError::FrequencyOutOfRange { .. }),
            "{e}"
        );
    }
}
