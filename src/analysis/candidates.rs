//! Candidate peaks: local maxima of a spectrum of the tap that stand
//! clear of the band's floor and of their neighbours. Each one is the
//! centre of a band for the subspace stage; their number is bounded.

use super::settings::AnalysisSettings;
use super::spectrum::DisplaySpectrum;

/// A peak of the spectrum searched.
#[derive(Clone, Copy, Debug)]
pub(super) struct Candidate {
    pub frequency_hz: f64,
    pub power: f32,
    pub prominence_db: f64,
    /// Bin spacing of the spectrum it was found in.
    pub bin_hz: f64,
    /// Width of the peak where it stays above half its power.
    pub half_power_width_hz: f64,
    /// The peak's own power: above the base its prominence is measured
    /// from (the higher of the dips beside it, where the skirts of its
    /// neighbours and the diffuse floor lie).
    pub own_power: f32,
    /// Width where the peak stays above its base plus half its own power.
    pub own_half_power_width_hz: f64,
}

/// Local maxima of the spectrum in the band, within [`CANDIDATE_RANGE_DB`]
/// of the strongest, that stand `min_above_floor_db` over the room noise (`noise_power`: what the noise alone gives in each
/// bin of this spectrum) and `min_prominence_db` over the dips that part
/// them from higher peaks, loudest first, at most `2·max_modes + 4`. The
/// floor is the noise, not a level of the band searched: in a narrow band
/// its own modes' skirts would be the floor and hide a mode.
pub(super) fn find_candidates(
    spectrum: &DisplaySpectrum,
    settings: &AnalysisSettings,
    noise_power: impl Fn(f64) -> f32,
) -> Vec<Candidate> {
    let power = &spectrum.power;
    if power.len() < 8 {
        return Vec::new();
    }
    let low = spectrum.bin_of_hz(settings.band_low_hz).max(2);
    let high = spectrum
        .bin_of_hz(settings.band_high_hz)
        .min(power.len() - 3);
    if high <= low {
        return Vec::new();
    }
    let above = 10f32.powf((settings.min_above_floor_db / 10.0) as f32);
    // Without measured noise (digital silence), the record's own rounding
    // is the floor: single precision keeps about 140 dB, and peaks more
    // than RANGE_WITHOUT_NOISE_DB under the strongest are not looked at.
    let strongest = power[low..=high].iter().copied().fold(0.0f32, f32::max);
    let rounding = strongest * 10f32.powf(-(RANGE_WITHOUT_NOISE_DB / 10.0) as f32);
    let in_range = strongest * 10f32.powf(-(CANDIDATE_RANGE_DB / 10.0) as f32);
    // What the decay holds besides its modes (the room's tail, the
    // strike's own sound) is a floor too: the median of the whole
    // spectrum, not of the band searched, so a narrow band's own modes
    // do not raise it.
    let diffuse = median_of_every_fourth(&power[2..power.len() - 2]);
    // The part of the threshold that is the same in every bin first: the
    // room noise is looked up only for the peaks that pass it.
    let common = (diffuse * above).max(rounding).max(in_range);
    let clears =
        |k: usize| power[k] > common && power[k] > noise_power(k as f64 * spectrum.bin_hz) * above;
    let mut found: Vec<Candidate> = (low..=high)
        .filter(|&k| power[k] >= power[k - 1] && power[k] > power[k + 1] && clears(k))
        .filter_map(|k| {
            let base = prominence_base(power, k);
            let prominence_db = 10.0 * f64::from(power[k] / base).log10();
            (prominence_db >= settings.min_prominence_db).then(|| Candidate {
                frequency_hz: interpolated_peak_bin(power, k) * spectrum.bin_hz,
                power: power[k],
                prominence_db,
                bin_hz: spectrum.bin_hz,
                half_power_width_hz: width_bins_above(power, k, power[k] / 2.0) as f64
                    * spectrum.bin_hz,
                own_power: power[k] - base,
                own_half_power_width_hz: width_bins_above(power, k, (power[k] + base) / 2.0) as f64
                    * spectrum.bin_hz,
            })
        })
        .collect();
    found.sort_by(|a, b| b.power.total_cmp(&a.power));
    found.truncate(settings.max_modes * 2 + 4);
    found
}

/// The median of every fourth value: neighbouring bins of the
/// zero-padded spectrum are correlated, and a quarter of them, evenly
/// spread, give the level of its floor as well (its scatter over
/// thousands of bins is far under a dB) for a quarter of the work.
fn median_of_every_fourth(values: &[f32]) -> f32 {
    let mut picked: Vec<f32> = values.iter().step_by(4).copied().collect();
    let mid = picked.len() / 2;
    let (_, m, _) = picked.select_nth_unstable_by(mid, f32::total_cmp);
    *m
}

/// Peaks more than this under the strongest of the band are not
/// candidates: twice the range within which every peak is guaranteed a
/// listed mode (`modal::GUARANTEED_WITHIN_DB`); further down, what stands
/// out is mostly the noise riding on a strong mode's skirt, and each
/// candidate costs a band (tapwright's choice, no source).
const CANDIDATE_RANGE_DB: f64 = 40.0;

/// See [`find_candidates`] (tapwright's choice: 20 dB above what single
/// precision resolves).
const RANGE_WITHOUT_NOISE_DB: f64 = 120.0;

/// Bins from the last one above `level` left of `k` to the last one on
/// the right (at most `MAX_WIDTH_BINS` either side).
fn width_bins_above(power: &[f32], k: usize, level: f32) -> usize {
    let above = |i: &usize| power[*i] > level;
    let right = (k + 1..power.len().min(k + 1 + MAX_WIDTH_BINS))
        .take_while(above)
        .count();
    let left = (k.saturating_sub(MAX_WIDTH_BINS)..k)
        .rev()
        .take_while(above)
        .count();
    left + right + 1
}

/// See [`width_bins_above`].
const MAX_WIDTH_BINS: usize = 128;

/// The base of the peak at `k` for its topographic prominence: the higher
/// of the two lowest points that separate it from higher ground on either
/// side (searched over ±10 % of the frequency, at least ±32 bins).
///
/// Both sides are walked together, one bin at a time: once one side has
/// met higher ground (or the end of the search), the other stops as soon
/// as its lowest point is at or under that side's, since it can then no
/// longer raise the base. The result is that of walking each side to its
/// end; the work is bounded by the nearer higher ground, not the reach.
fn prominence_base(power: &[f32], k: usize) -> f32 {
    let reach = (k / 10).max(32);
    let peak = power[k];
    let low_end = k.saturating_sub(reach);
    let high_end = (k + reach + 1).min(power.len());
    let (mut left_low, mut right_low) = (peak, peak);
    let (mut left_done, mut right_done) = (low_end >= k, k + 1 >= high_end);
    let mut step = 1;
    while !(left_done && right_done) {
        if !left_done {
            let i = k - step;
            if power[i] > peak {
                left_done = true;
            } else {
                left_low = left_low.min(power[i]);
                left_done = i == low_end;
            }
        }
        if !right_done {
            let i = k + step;
            if power[i] > peak {
                right_done = true;
            } else {
                right_low = right_low.min(power[i]);
                right_done = i + 1 >= high_end;
            }
        }
        if left_done && right_low <= left_low {
            right_done = true;
        }
        if right_done && left_low <= right_low {
            left_done = true;
        }
        step += 1;
    }
    left_low.max(right_low).max(1e-30)
}

/// Parabolic interpolation of the peak on the dB scale, in bins.
fn interpolated_peak_bin(power: &[f32], k: usize) -> f64 {
    let db = |i: usize| 10.0 * f64::from(power[i].max(1e-30)).log10();
    let (a, b, c) = (db(k - 1), db(k), db(k + 1));
    let denom = a - 2.0 * b + c;
    let offset = if denom.abs() > 1e-12 {
        0.5 * (a - c) / denom
    } else {
        0.0
    };
    k as f64 + offset.clamp(-0.5, 0.5)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The base found by walking both sides together is that of walking
    /// each side to its end (higher ground or the reach), on a spectrum
    /// of many peaks of every height.
    #[test]
    fn the_two_sided_walk_finds_the_plain_base() {
        let mut state = 12345u64;
        let power: Vec<f32> = (0..4000)
            .map(|_| {
                state = state
                    .wrapping_mul(6364136223846793005)
                    .wrapping_add(1442695040888963407);
                ((state >> 33) as f32 / (1u64 << 31) as f32).powi(4) + 1e-6
            })
            .collect();
        let plain = |k: usize| -> f32 {
            let reach = (k / 10).max(32);
            let side = |indices: &mut dyn Iterator<Item = usize>| {
                let mut lowest = power[k];
                for i in indices {
                    if power[i] > power[k] {
                        break;
                    }
                    lowest = lowest.min(power[i]);
                }
                lowest
            };
            let left = side(&mut (k.saturating_sub(reach)..k).rev());
            let right = side(&mut (k + 1..(k + reach + 1).min(power.len())));
            left.max(right).max(1e-30)
        };
        for k in 1..power.len() - 1 {
            assert_eq!(prominence_base(&power, k), plain(k), "bin {k}");
        }
    }
}
