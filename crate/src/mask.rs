//! Spec masks: the limits a response must stay inside, the minimum order of each alignment that
//! meets them, and the check of a computed response against them.
//!
//! A [`SpecMask`] states, in Hz and dB:
//! - a passband (below an edge for low-pass, above it for high-pass, between two edges for
//!   band-pass) with the largest passband loss allowed (ripple or droop);
//! - a stopband (above an edge for low-pass, below it for high-pass, outside two edges for
//!   band-pass) with the smallest attenuation required;
//! - optionally the largest group-delay variation (max − min, in seconds) allowed over the passband.
//!
//! # The passband reference
//! Loss and attenuation are measured from the **largest gain over the passband**. So the passband
//! loss is the spread from the highest to the lowest passband gain: the droop from DC for a
//! monotone low-pass, the peak-to-trough ripple for a Chebyshev response. This is the reading of
//! `scipy.signal.buttord` and `cheb1ord` (their designs peak at 0 dB in the passband: SciPy 1.17.1
//! docstrings, "gpass: the maximum loss in the passband (dB)"). A point at exactly an edge belongs to
//! its band; the transition band between the edges is unconstrained.
//!
//! # Minimum order
//! Each mask is first reduced to its low-pass equivalent in the normalised variable Ω (common
//! practice, the substitutions of [`crate::transform`]): Ω = f/f_p for low-pass, f_p/f for
//! high-pass and |f² − f0²|/(B·f) for band-pass (f0 = √(f_pl·f_ph), B = f_ph − f_pl), so the
//! passband is 0 ≤ Ω ≤ 1 and the stopband starts at Ω_s (for band-pass, the tighter of the two
//! stopband edges: a mask that is not geometrically symmetric is designed for its tighter side).
//! A prototype placed with its own cutoff at Ω = c then meets the passband for c ≥ c_pass and the
//! stopband for c ≤ c_stop, both found on the prototype's exact response (bisection to f64
//! resolution). A group-delay limit raises c_pass to the smallest c that meets it, found by
//! bisection on the transformed design. An order is met when c_pass ≤ c_stop; the recommended
//! cutoff is their **geometric mean** c = √(c_pass·c_stop), which leaves a positive margin on
//! both sides, and both extremes are reported too. When no order up to [`MAX_ORDER`] is met, the
//! closest order is the one that misses least with its cutoff where the passband and stopband
//! margins are equal (c_stop < c < c_pass), then the one that misses the delay limit least.
//!
//! Butterworth and Chebyshev also have closed forms for the order (S. Butterworth's and the
//! standard Chebyshev-I order formulas, as in `scipy.signal.buttord` and `cheb1ord`, SciPy 1.17.1
//! source; the same formulas are in most filter handbooks, from memory):
//! - Butterworth: n ≥ log10((10^{A_s/10} − 1)/(10^{A_p/10} − 1)) / (2·log10 Ω_s);
//! - Chebyshev I (ripple = A_p): n ≥ acosh(√((10^{A_s/10} − 1)/(10^{A_p/10} − 1))) / acosh(Ω_s).
//!
//! The closed form gives the order, and every order is then verified by evaluating the actual
//! prototype ([`crate::prototype::lowpass_prototype`]), denormalised by
//! [`crate::transform::denormalize`] exactly as the design would be, against the mask on a dense
//! grid with its extrema refined ([`check_design`]). The other alignments (Bessel, Linkwitz-Riley,
//! critically damped) are searched over their orders up to [`MAX_ORDER`] on that real response.
//!
//! The structural facts used to place c (all common practice, and each design is then verified on
//! its full response): Butterworth, Bessel, Linkwitz-Riley and critically damped low-pass
//! prototypes fall monotonically with frequency; a Chebyshev I prototype has its 0 dB peaks at the
//! zeros of T_n, ω = cos((2k − 1)π/(2n)), and falls monotonically above the last one (from memory).

use std::fmt;

use num_complex::Complex64;
use serde::{Deserialize, Serialize};

use crate::prototype::{lowpass_prototype, Zpk, MAX_ORDER};
use crate::response::Response;
use crate::synthesis::{Alignment, Band, BesselNormalization, ResponseType, SynthesisError};
use crate::transform::denormalize;

/// The limits a response must stay inside.
///
/// Frequencies in Hz, levels in dB relative to the passband reference (the largest passband
/// gain, see the module docs), delay in seconds.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SpecMask {
    /// The response type and its band edges.
    pub band: MaskBand,
    /// The largest loss allowed anywhere in the passband, in dB (> 0): ripple or droop.
    pub max_passband_loss_db: f64,
    /// The smallest attenuation required anywhere in the stopband, in dB (above the passband loss).
    pub min_stopband_attenuation_db: f64,
    /// The largest group-delay variation (max − min) allowed over the passband, in seconds.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub max_group_delay_variation_s: Option<f64>,
}

/// The response type of a mask and its edges, in Hz.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(tag = "response", rename_all = "lowercase", deny_unknown_fields)]
pub enum MaskBand {
    /// Passes 0 … passband edge, stops from the stopband edge up.
    LowPass {
        /// The upper end of the passband in Hz.
        passband_edge_hz: f64,
        /// The lower end of the stopband in Hz (above the passband edge).
        stopband_edge_hz: f64,
    },
    /// Passes from the passband edge up, stops 0 … stopband edge.
    HighPass {
        /// The lower end of the passband in Hz.
        passband_edge_hz: f64,
        /// The upper end of the stopband in Hz (below the passband edge).
        stopband_edge_hz: f64,
    },
    /// Passes between two edges, stops below the lower and above the upper stopband edge.
    BandPass {
        /// The upper end of the lower stopband in Hz.
        stopband_low_hz: f64,
        /// The lower end of the passband in Hz.
        passband_low_hz: f64,
        /// The upper end of the passband in Hz.
        passband_high_hz: f64,
        /// The lower end of the upper stopband in Hz.
        stopband_high_hz: f64,
    },
}

/// A part of the mask.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum MaskRegion {
    /// The passband loss limit.
    Passband,
    /// The stopband attenuation limit.
    Stopband,
    /// The passband group-delay variation limit.
    GroupDelay,
}

/// Which side of a gain limit is forbidden.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Forbidden {
    /// Gains above the limit are outside the mask (a stopband).
    Above,
    /// Gains below the limit are outside the mask (a passband).
    Below,
}

/// A forbidden rectangle of the mask, for shading on a gain plot.
///
/// The gain limit is relative to the passband reference gain (0 dB = the largest passband gain);
/// add the measured reference to draw it on an absolute scale.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct ForbiddenRegion {
    /// Which limit this is.
    pub region: MaskRegion,
    /// The low end in Hz (0 for a band that starts at DC).
    pub f_lo_hz: f64,
    /// The high end in Hz (`f64::INFINITY` for a band that is open upwards).
    pub f_hi_hz: f64,
    /// The gain limit in dB relative to the passband reference (−loss or −attenuation).
    pub limit_db: f64,
    /// Which side of the limit is forbidden.
    pub forbidden: Forbidden,
}

/// How one region of the mask is met.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct RegionMargin {
    /// The region.
    pub region: MaskRegion,
    /// The margin: > 0 inside the mask. In dB for the passband and stopband, in seconds for the
    /// group delay.
    pub margin: f64,
    /// The worst frequency in Hz (lowest passband gain, highest stopband gain, or the delay
    /// extreme farther from the delay at the reference frequency).
    pub f_hz: f64,
    /// What was measured there: the largest passband loss (dB), the smallest stopband attenuation
    /// (dB) or the group-delay variation (s).
    pub measured: f64,
    /// The mask's limit, in the same unit.
    pub limit: f64,
    /// How many usable points fell in the region.
    pub points: usize,
}

/// The result of checking a response against a mask.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MaskReport {
    /// Whether every region is met: each margin ≥ −1e-9 dB (−1e-9 of the delay limit), so that a
    /// limit met exactly in exact arithmetic (the ripple of a Chebyshev design whose ripple equals
    /// the passband loss) is not failed by rounding.
    pub pass: bool,
    /// The passband reference gain in dB: the largest gain over the passband points.
    pub reference_gain_db: f64,
    /// Where the reference was taken, in Hz.
    pub reference_f_hz: f64,
    /// The passband loss limit.
    pub passband: RegionMargin,
    /// The stopband attenuation limit.
    pub stopband: RegionMargin,
    /// The group-delay limit, when the mask sets one.
    pub group_delay: Option<RegionMargin>,
    /// The smaller of the passband and stopband margins, in dB.
    pub worst_margin_db: f64,
    /// Where that margin occurs, in Hz.
    pub worst_f_hz: f64,
    /// Which region it is ([`MaskRegion::Passband`] or [`MaskRegion::Stopband`]); see
    /// [`MaskReport::worst`] for a comparison that includes the group delay.
    pub worst_region: MaskRegion,
    /// How many points were skipped: unsolved, non-finite or negative frequency, or a gain that is
    /// not a finite number. A point in the transition band is not skipped, just unconstrained.
    pub skipped: usize,
}

/// The minimum order of one alignment for a mask, and where to put its cutoff.
#[derive(Debug, Clone, PartialEq)]
pub struct OrderChoice {
    /// The alignment.
    pub alignment: Alignment,
    /// The lowest order that meets the mask.
    pub order: usize,
    /// The real-valued order from the closed form (Butterworth and Chebyshev only); `order` is its
    /// ceiling unless the verification on the real response moved it (rounding at an integer, or
    /// a group-delay limit the closed form does not see).
    pub closed_form_order: Option<f64>,
    /// The recommended cutoff in the alignment's own meaning ([`Band::Cutoff`] for low-pass and
    /// high-pass, [`Band::Edges`] for band-pass): the geometric mean of the two extremes.
    pub band: Band,
    /// The cutoff at which the passband (or the group-delay limit) is just met.
    pub passband_limited: Band,
    /// The cutoff at which the stopband is just met.
    pub stopband_limited: Band,
    /// The design at `band`, checked against the mask (its margins are both ≥ 0).
    pub report: MaskReport,
}

/// The minimum orders of all alignments for one mask.
#[derive(Debug, Clone, PartialEq)]
pub struct MinimumOrders {
    /// The alignments that meet the mask, best first: lowest order, then largest worst margin.
    pub met: Vec<OrderChoice>,
    /// The alignments that cannot ([`MaskError::Unreachable`]), closest first.
    pub unmet: Vec<MaskError>,
}

/// Why a mask cannot be used or met.
#[derive(Debug, Clone, PartialEq)]
pub enum MaskError {
    /// A frequency is not finite and above 0 Hz.
    BadFrequency {
        /// Which, e.g. "passband edge".
        what: &'static str,
        /// The value in Hz.
        value_hz: f64,
    },
    /// A level is not finite and above 0 dB.
    BadLevel {
        /// Which, e.g. "passband loss".
        what: &'static str,
        /// The value in dB.
        value_db: f64,
    },
    /// The group-delay limit is not finite and above 0 s.
    BadDelay {
        /// The value in seconds.
        value_s: f64,
    },
    /// Two edges are in the wrong order (a stopband that overlaps the passband).
    EdgeOrder {
        /// The edge that must be lower.
        lower: &'static str,
        /// Its value in Hz.
        lower_hz: f64,
        /// The edge that must be higher.
        upper: &'static str,
        /// Its value in Hz.
        upper_hz: f64,
    },
    /// The stopband attenuation does not exceed the passband loss.
    AttenuationNotAboveLoss {
        /// The passband loss in dB.
        max_passband_loss_db: f64,
        /// The stopband attenuation in dB.
        min_stopband_attenuation_db: f64,
    },
    /// A Chebyshev ripple larger than the passband loss the mask allows.
    RippleAboveLoss {
        /// The ripple in dB.
        ripple_db: f64,
        /// The mask's passband loss in dB.
        max_passband_loss_db: f64,
    },
    /// An alignment that has no order to choose.
    NoOrderToChoose {
        /// The alignment's name.
        alignment: &'static str,
    },
    /// The prototype could not be built (e.g. a Chebyshev ripple outside (0, 10] dB).
    Prototype(SynthesisError),
    /// No order up to [`MAX_ORDER`] meets the mask.
    Unreachable {
        /// The alignment.
        alignment: Alignment,
        /// The order that comes closest.
        closest_order: usize,
        /// How far the closest order misses the passband and stopband limits, in dB, with its cutoff
        /// where the two margins are equal: the least amount by which both limits together would
        /// have to be relaxed (0 when only the group delay is missed).
        shortfall_db: f64,
        /// How far it misses the group-delay limit, in seconds (0 when met or not limited).
        group_delay_shortfall_s: f64,
    },
    /// The slices given to [`check_points`] differ in length.
    LengthMismatch {
        /// Number of frequencies.
        frequencies: usize,
        /// Number of gains.
        gains: usize,
        /// Number of group delays.
        group_delays: usize,
    },
    /// A region of the mask has no usable point to check.
    NotCovered {
        /// The region.
        region: MaskRegion,
        /// Its low end in Hz.
        f_lo_hz: f64,
        /// Its high end in Hz (infinite for an open band).
        f_hi_hz: f64,
        /// How many points were skipped in total.
        skipped: usize,
    },
}

/// The alignments [`minimum_orders`] tries, with Chebyshev at ripple = the mask's passband loss
/// (capped at the prototype's 10 dB).
pub fn mask_alignments(mask: &SpecMask) -> [Alignment; 5] {
    [
        Alignment::Butterworth,
        Alignment::Chebyshev { ripple_db: mask.max_passband_loss_db.min(10.0) },
        Alignment::Bessel { normalization: BesselNormalization::Magnitude },
        Alignment::LinkwitzRiley,
        Alignment::Critical,
    ]
}

/// Finds the minimum order of one alignment that meets the mask, and where to put its cutoff.
///
/// See the module docs for the method. Chebyshev uses the ripple given in the alignment, which
/// must not exceed the mask's passband loss (the loss itself is the natural choice). Bessel may
/// use any normalisation; the cutoff returned is in that normalisation's meaning.
///
/// # Errors
/// - Any [`SpecMask::validate`] error.
/// - [`MaskError::RippleAboveLoss`], [`MaskError::NoOrderToChoose`] (a single f0/Q section),
///   [`MaskError::Prototype`] for a ripple the prototype rejects.
/// - [`MaskError::Unreachable`] when no order up to [`MAX_ORDER`] meets the mask, naming the closest.
pub fn minimum_order(mask: &SpecMask, alignment: Alignment) -> Result<OrderChoice, MaskError> {
    mask.validate()?;
    match alignment {
        Alignment::Quality { .. } => return Err(MaskError::NoOrderToChoose { alignment: alignment.name() }),
        Alignment::Chebyshev { ripple_db } => {
            lowpass_prototype(alignment, 1).map_err(MaskError::Prototype)?;
            if ripple_db > mask.max_passband_loss_db {
                return Err(MaskError::RippleAboveLoss { ripple_db, max_passband_loss_db: mask.max_passband_loss_db });
            }
        }
        _ => {}
    }
    let closed_form_order = closed_form_order(mask, alignment);
    let orders: Vec<usize> = if alignment == Alignment::LinkwitzRiley {
        (2..=MAX_ORDER).step_by(2).collect()
    } else {
        (1..=MAX_ORDER).collect()
    };
    let mut attempts: Vec<Attempt> = Vec::with_capacity(orders.len());
    // The closed form's ceiling is tried first and accepted when it verifies and the order below
    // does not; otherwise (rounding at an integer, a group-delay limit) the ascending search decides.
    if let Some(estimate) = closed_form_order {
        let order = estimate.ceil().max(1.0);
        if order <= MAX_ORDER as f64 {
            let order = order as usize;
            let below_met = order > 1 && attempt(mask, alignment, order - 1)?.choice.is_some();
            if !below_met {
                if let Some(mut choice) = attempt(mask, alignment, order)?.choice {
                    choice.closed_form_order = closed_form_order;
                    return Ok(choice);
                }
            }
        }
    }
    for order in orders {
        let found = attempt(mask, alignment, order)?;
        if let Some(mut choice) = found.choice {
            choice.closed_form_order = closed_form_order;
            return Ok(choice);
        }
        attempts.push(found);
    }
    // Closest: the smallest passband/stopband shortfall, then the smallest group-delay shortfall.
    let closest = attempts
        .iter()
        .min_by(|a, b| {
            a.shortfall_db.total_cmp(&b.shortfall_db).then(a.delay_shortfall_s.total_cmp(&b.delay_shortfall_s))
        })
        .expect("at least one order is tried");
    Err(MaskError::Unreachable {
        alignment,
        closest_order: closest.order,
        shortfall_db: closest.shortfall_db,
        group_delay_shortfall_s: closest.delay_shortfall_s,
    })
}

/// Finds the minimum order of every alignment in [`mask_alignments`], best first.
///
/// # Errors
/// Any [`SpecMask::validate`] error. An alignment that cannot meet the mask is listed in
/// [`MinimumOrders::unmet`], not returned as an error.
pub fn minimum_orders(mask: &SpecMask) -> Result<MinimumOrders, MaskError> {
    mask.validate()?;
    let mut met = Vec::new();
    let mut unmet = Vec::new();
    for alignment in mask_alignments(mask) {
        match minimum_order(mask, alignment) {
            Ok(choice) => met.push(choice),
            Err(error @ MaskError::Unreachable { .. }) => unmet.push(error),
            Err(error) => return Err(error),
        }
    }
    met.sort_by(|a: &OrderChoice, b: &OrderChoice| {
        a.order.cmp(&b.order).then(b.report.worst_margin_db.total_cmp(&a.report.worst_margin_db))
    });
    let shortfall = |e: &MaskError| match e {
        MaskError::Unreachable { shortfall_db, group_delay_shortfall_s, .. } => {
            (*shortfall_db, *group_delay_shortfall_s)
        }
        _ => (f64::INFINITY, f64::INFINITY),
    };
    unmet.sort_by(|a, b| {
        let (a, b) = (shortfall(a), shortfall(b));
        a.0.total_cmp(&b.0).then(a.1.total_cmp(&b.1))
    });
    Ok(MinimumOrders { met, unmet })
}

/// Checks a swept response against the mask.
///
/// Gains are 20·log10|H| at the swept points (H = 0 counts as −400 dB, far below any limit);
/// unsolved points are skipped and counted. See [`check_points`] for the rules.
///
/// # Errors
/// As [`check_points`].
pub fn check(mask: &SpecMask, response: &Response) -> Result<MaskReport, MaskError> {
    let gains: Vec<Option<f64>> = response
        .transfer()
        .iter()
        .map(|h| h.map(|h| crate::response::magnitude_db(h).unwrap_or(GAIN_FLOOR_DB).max(GAIN_FLOOR_DB)))
        .collect();
    let delays = if mask.max_group_delay_variation_s.is_some() { response.group_delay_s() } else { Vec::new() };
    check_points(mask, response.frequencies(), &gains, &delays)
}

/// Checks sampled values against the mask: frequencies in Hz, gains in dB, group delays in s.
///
/// Each point is classified by its frequency (edges belong to their band; the transition band is
/// not constrained). The reference is the largest passband gain; passband margin = limit − (reference
/// − lowest passband gain), stopband margin = (reference − highest stopband gain) − limit, and
/// group-delay margin = limit − (max − min of the passband delays). Only the given points are
/// checked: a peak between two points is not seen. Points with a `None`, non-finite gain or
/// frequency, or a negative frequency are skipped and counted; a `None` delay is left out of the
/// delay check only.
///
/// `group_delay_s` has one entry per frequency, or is empty when the mask sets no group-delay limit.
///
/// # Errors
/// - Any [`SpecMask::validate`] error.
/// - [`MaskError::LengthMismatch`] when the slices differ in length.
/// - [`MaskError::NotCovered`] when the passband, the stopband or (if limited) the passband delay has
///   no usable point: sweep wider.
pub fn check_points(
    mask: &SpecMask,
    f_hz: &[f64],
    gain_db: &[Option<f64>],
    group_delay_s: &[Option<f64>],
) -> Result<MaskReport, MaskError> {
    mask.validate()?;
    let delay_limit = mask.max_group_delay_variation_s;
    let delays_ok = group_delay_s.len() == f_hz.len() || (group_delay_s.is_empty() && delay_limit.is_none());
    if gain_db.len() != f_hz.len() || !delays_ok {
        return Err(MaskError::LengthMismatch {
            frequencies: f_hz.len(),
            gains: gain_db.len(),
            group_delays: group_delay_s.len(),
        });
    }
    let mut skipped = 0;
    let mut pass_points: Vec<(f64, f64, Option<f64>)> = Vec::new();
    let mut stop_max: Option<(f64, f64)> = None; // (f, gain)
    let mut stop_points = 0;
    for (idx, (&f, gain)) in f_hz.iter().zip(gain_db).enumerate() {
        let Some(gain) = gain.filter(|g| g.is_finite()).filter(|_| f.is_finite() && f >= 0.0) else {
            skipped += 1;
            continue;
        };
        let delay = group_delay_s.get(idx).copied().flatten().filter(|t| t.is_finite());
        if mask.band.in_passband(f) {
            pass_points.push((f, gain, delay));
        } else if mask.band.in_stopband(f) {
            stop_points += 1;
            if stop_max.is_none_or(|(_, g)| gain > g) {
                stop_max = Some((f, gain));
            }
        }
    }
    let not_covered = |region: MaskRegion, (f_lo_hz, f_hi_hz): (f64, f64)| MaskError::NotCovered {
        region,
        f_lo_hz,
        f_hi_hz,
        skipped,
    };
    let passband_range = mask.band.passband_range();
    let reference = pass_points.iter().copied().max_by(|a, b| a.1.total_cmp(&b.1));
    let lowest = pass_points.iter().copied().min_by(|a, b| a.1.total_cmp(&b.1));
    let (Some((reference_f_hz, reference_gain_db, reference_delay)), Some((low_f, low_gain, _))) = (reference, lowest)
    else {
        return Err(not_covered(MaskRegion::Passband, passband_range));
    };
    let Some((stop_f, stop_gain)) = stop_max else {
        return Err(not_covered(MaskRegion::Stopband, mask.band.stopband_range()));
    };
    let loss = reference_gain_db - low_gain;
    let passband = RegionMargin {
        region: MaskRegion::Passband,
        margin: mask.max_passband_loss_db - loss,
        f_hz: low_f,
        measured: loss,
        limit: mask.max_passband_loss_db,
        points: pass_points.len(),
    };
    let attenuation = reference_gain_db - stop_gain;
    let stopband = RegionMargin {
        region: MaskRegion::Stopband,
        margin: attenuation - mask.min_stopband_attenuation_db,
        f_hz: stop_f,
        measured: attenuation,
        limit: mask.min_stopband_attenuation_db,
        points: stop_points,
    };
    let group_delay = match delay_limit {
        None => None,
        Some(limit) => {
            let delays: Vec<(f64, f64)> = pass_points.iter().filter_map(|&(f, _, t)| t.map(|t| (f, t))).collect();
            let high = delays.iter().copied().max_by(|a, b| a.1.total_cmp(&b.1));
            let low = delays.iter().copied().min_by(|a, b| a.1.total_cmp(&b.1));
            let (Some(high), Some(low)) = (high, low) else {
                return Err(not_covered(MaskRegion::GroupDelay, passband_range));
            };
            // The extreme farther from the delay at the reference point is where the delay "went".
            let at_reference = reference_delay.unwrap_or(high.1);
            let worst = if (high.1 - at_reference).abs() >= (at_reference - low.1).abs() { high } else { low };
            let variation = high.1 - low.1;
            Some(RegionMargin {
                region: MaskRegion::GroupDelay,
                margin: limit - variation,
                f_hz: worst.0,
                measured: variation,
                limit,
                points: delays.len(),
            })
        }
    };
    let amplitude_worst = if passband.margin <= stopband.margin { passband } else { stopband };
    let pass = passband.margin >= -PASS_TOLERANCE
        && stopband.margin >= -PASS_TOLERANCE
        && group_delay.is_none_or(|g| g.margin >= -PASS_TOLERANCE * g.limit);
    Ok(MaskReport {
        pass,
        reference_gain_db,
        reference_f_hz,
        passband,
        stopband,
        group_delay,
        worst_margin_db: amplitude_worst.margin,
        worst_f_hz: amplitude_worst.f_hz,
        worst_region: amplitude_worst.region,
        skipped,
    })
}

/// Checks a transfer function (zeros and poles in rad/s, as [`denormalize`] returns it) against the
/// mask on its exact response.
///
/// The response is sampled on a dense grid over each region: the passband linearly (for a
/// high-pass, linearly in f_p/f) and logarithmically (four decades below a low-pass edge, plus DC;
/// six decades above a high-pass edge), each stopband logarithmically over six decades beyond its
/// edge. Each local extremum of the gain and the group delay is
/// refined by golden-section search before [`check_points`] is applied. The group delay is
/// τ(ω) = Σ_p −Re p/((Re p)² + (ω − Im p)²) − Σ_z (the same for the zeros) (references.md §7).
///
/// # Errors
/// As [`check_points`].
pub fn check_design(mask: &SpecMask, design: &Zpk) -> Result<MaskReport, MaskError> {
    mask.validate()?;
    let mut f_hz: Vec<f64> = Vec::new();
    for segment in mask.band.sample_segments() {
        let values: Vec<(f64, f64, f64)> =
            segment.iter().map(|&f| (f, design_gain_db(design, f), design_delay_s(design, f))).collect();
        f_hz.extend_from_slice(&segment);
        for pick in [Pick::GainMax, Pick::GainMin, Pick::DelayMax, Pick::DelayMin] {
            f_hz.extend(refine_extrema(design, &values, pick));
        }
    }
    let gains: Vec<Option<f64>> = f_hz.iter().map(|&f| Some(design_gain_db(design, f))).collect();
    let delays: Vec<Option<f64>> = if mask.max_group_delay_variation_s.is_some() {
        f_hz.iter().map(|&f| Some(design_delay_s(design, f))).collect()
    } else {
        Vec::new()
    };
    check_points(mask, &f_hz, &gains, &delays)
}

impl SpecMask {
    /// Checks that the mask is usable.
    ///
    /// # Errors
    /// - [`MaskError::BadFrequency`] for an edge that is not finite and above 0 Hz.
    /// - [`MaskError::EdgeOrder`] for edges in the wrong order: a low-pass stopband edge not above the
    ///   passband edge, a high-pass one not below it, band-pass edges not strictly ascending.
    /// - [`MaskError::BadLevel`] for a passband loss or stopband attenuation not finite and above 0 dB.
    /// - [`MaskError::AttenuationNotAboveLoss`] when the attenuation does not exceed the loss.
    /// - [`MaskError::BadDelay`] for a group-delay limit that is not finite and above 0 s.
    pub fn validate(&self) -> Result<(), MaskError> {
        let edges: Vec<(&'static str, f64)> = match self.band {
            MaskBand::LowPass { passband_edge_hz, stopband_edge_hz } => {
                vec![("passband edge", passband_edge_hz), ("stopband edge", stopband_edge_hz)]
            }
            MaskBand::HighPass { passband_edge_hz, stopband_edge_hz } => {
                vec![("stopband edge", stopband_edge_hz), ("passband edge", passband_edge_hz)]
            }
            MaskBand::BandPass { stopband_low_hz, passband_low_hz, passband_high_hz, stopband_high_hz } => vec![
                ("lower stopband edge", stopband_low_hz),
                ("lower passband edge", passband_low_hz),
                ("upper passband edge", passband_high_hz),
                ("upper stopband edge", stopband_high_hz),
            ],
        };
        for &(what, value_hz) in &edges {
            if !(value_hz.is_finite() && value_hz > 0.0) {
                return Err(MaskError::BadFrequency { what, value_hz });
            }
        }
        for pair in edges.windows(2) {
            let ((lower, lower_hz), (upper, upper_hz)) = (pair[0], pair[1]);
            if upper_hz <= lower_hz {
                return Err(MaskError::EdgeOrder { lower, lower_hz, upper, upper_hz });
            }
        }
        for (what, value_db) in
            [("passband loss", self.max_passband_loss_db), ("stopband attenuation", self.min_stopband_attenuation_db)]
        {
            if !(value_db.is_finite() && value_db > 0.0) {
                return Err(MaskError::BadLevel { what, value_db });
            }
        }
        if self.min_stopband_attenuation_db <= self.max_passband_loss_db {
            return Err(MaskError::AttenuationNotAboveLoss {
                max_passband_loss_db: self.max_passband_loss_db,
                min_stopband_attenuation_db: self.min_stopband_attenuation_db,
            });
        }
        if let Some(value_s) = self.max_group_delay_variation_s {
            if !(value_s.is_finite() && value_s > 0.0) {
                return Err(MaskError::BadDelay { value_s });
            }
        }
        Ok(())
    }

    /// The forbidden rectangles of the mask's gain limits, for a plot to shade.
    ///
    /// Levels are relative to the passband reference gain (see [`ForbiddenRegion`]). The group-delay
    /// limit is relative to the measured delay and has no fixed rectangle, so it is not listed.
    pub fn regions(&self) -> Vec<ForbiddenRegion> {
        let passband = |(f_lo_hz, f_hi_hz): (f64, f64)| ForbiddenRegion {
            region: MaskRegion::Passband,
            f_lo_hz,
            f_hi_hz,
            limit_db: -self.max_passband_loss_db,
            forbidden: Forbidden::Below,
        };
        let stopband = |f_lo_hz: f64, f_hi_hz: f64| ForbiddenRegion {
            region: MaskRegion::Stopband,
            f_lo_hz,
            f_hi_hz,
            limit_db: -self.min_stopband_attenuation_db,
            forbidden: Forbidden::Above,
        };
        let mut regions = vec![passband(self.band.passband_range())];
        match self.band {
            MaskBand::LowPass { stopband_edge_hz, .. } => regions.push(stopband(stopband_edge_hz, f64::INFINITY)),
            MaskBand::HighPass { stopband_edge_hz, .. } => regions.push(stopband(0.0, stopband_edge_hz)),
            MaskBand::BandPass { stopband_low_hz, stopband_high_hz, .. } => {
                regions.push(stopband(0.0, stopband_low_hz));
                regions.push(stopband(stopband_high_hz, f64::INFINITY));
            }
        }
        regions
    }
}

impl MaskBand {
    /// The response type.
    pub fn response_type(&self) -> ResponseType {
        match self {
            Self::LowPass { .. } => ResponseType::LowPass,
            Self::HighPass { .. } => ResponseType::HighPass,
            Self::BandPass { .. } => ResponseType::BandPass,
        }
    }

    /// The passband as (low, high) in Hz; the high end is infinite for a high-pass.
    pub fn passband_range(&self) -> (f64, f64) {
        match *self {
            Self::LowPass { passband_edge_hz, .. } => (0.0, passband_edge_hz),
            Self::HighPass { passband_edge_hz, .. } => (passband_edge_hz, f64::INFINITY),
            Self::BandPass { passband_low_hz, passband_high_hz, .. } => (passband_low_hz, passband_high_hz),
        }
    }

    /// The stopband's outer limits as (low, high) in Hz (for a band-pass, 0 … ∞ minus the gap
    /// between its two stopband edges).
    fn stopband_range(&self) -> (f64, f64) {
        match *self {
            Self::LowPass { stopband_edge_hz, .. } => (stopband_edge_hz, f64::INFINITY),
            Self::HighPass { stopband_edge_hz, .. } => (0.0, stopband_edge_hz),
            Self::BandPass { .. } => (0.0, f64::INFINITY),
        }
    }

    fn in_passband(&self, f: f64) -> bool {
        let (low, high) = self.passband_range();
        f >= low && f <= high
    }

    fn in_stopband(&self, f: f64) -> bool {
        match *self {
            Self::LowPass { stopband_edge_hz, .. } => f >= stopband_edge_hz,
            Self::HighPass { stopband_edge_hz, .. } => f <= stopband_edge_hz,
            Self::BandPass { stopband_low_hz, stopband_high_hz, .. } => f <= stopband_low_hz || f >= stopband_high_hz,
        }
    }

    /// Ω_s: the stopband edge in the low-pass-equivalent variable (passband edge at Ω = 1).
    fn omega_stop(&self) -> f64 {
        match *self {
            Self::LowPass { passband_edge_hz, stopband_edge_hz } => stopband_edge_hz / passband_edge_hz,
            Self::HighPass { passband_edge_hz, stopband_edge_hz } => passband_edge_hz / stopband_edge_hz,
            Self::BandPass { stopband_low_hz, passband_low_hz, passband_high_hz, stopband_high_hz } => {
                let f0_sq = passband_low_hz * passband_high_hz;
                let width = passband_high_hz - passband_low_hz;
                let omega = |f: f64| (f * f - f0_sq).abs() / (width * f);
                omega(stopband_low_hz).min(omega(stopband_high_hz))
            }
        }
    }

    /// The design band for a prototype whose cutoff sits at Ω = c in the low-pass-equivalent variable.
    fn design_band(&self, c: f64) -> Band {
        match *self {
            Self::LowPass { passband_edge_hz, .. } => Band::Cutoff(c * passband_edge_hz),
            Self::HighPass { passband_edge_hz, .. } => Band::Cutoff(passband_edge_hz / c),
            Self::BandPass { passband_low_hz, passband_high_hz, .. } => {
                // Same centre f0, bandwidth c·B: the edges solve f² ∓ c·B·f − f0² = 0.
                let f0_sq = passband_low_hz * passband_high_hz;
                let width = c * (passband_high_hz - passband_low_hz);
                let low_hz = 2.0 * f0_sq / (width + (width * width + 4.0 * f0_sq).sqrt());
                Band::Edges { low_hz, high_hz: low_hz + width }
            }
        }
    }

    /// Sorted frequency lists over which a design is sampled: one per passband or stopband piece.
    fn sample_segments(&self) -> Vec<Vec<f64>> {
        let log_up = |edge: f64| (0..=SAMPLE_DECADES * LOG_PER_DECADE).map(move |k| edge * decade_step(k)).collect();
        let log_down = |edge: f64| {
            let mut f: Vec<f64> = (0..=SAMPLE_DECADES * LOG_PER_DECADE).map(|k| edge / decade_step(k)).collect();
            f.reverse();
            f
        };
        let linear = |low: f64, high: f64| -> Vec<f64> {
            (0..=LINEAR_POINTS).map(|k| low + (high - low) * k as f64 / LINEAR_POINTS as f64).collect()
        };
        let merge = |mut a: Vec<f64>, b: Vec<f64>, low: f64, high: f64| {
            a.extend(b);
            a.retain(|&f| f >= low && f <= high);
            a.push(low.max(0.0));
            if high.is_finite() {
                a.push(high);
            }
            a.sort_by(f64::total_cmp);
            a.dedup();
            a
        };
        match *self {
            Self::LowPass { passband_edge_hz: fp, stopband_edge_hz: fs } => {
                let below: Vec<f64> = log_down(fp).into_iter().filter(|&f| f >= fp * 1e-4).collect();
                vec![merge(linear(0.0, fp), below, 0.0, fp), merge(log_up(fs), Vec::new(), fs, f64::INFINITY)]
            }
            Self::HighPass { passband_edge_hz: fp, stopband_edge_hz: fs } => {
                // Linear in Ω = fp/f, where the ripple of an equiripple design is spread evenly.
                let inverse: Vec<f64> = (1..=LINEAR_POINTS).map(|k| fp * LINEAR_POINTS as f64 / k as f64).collect();
                vec![merge(inverse, log_up(fp), fp, f64::INFINITY), merge(log_down(fs), Vec::new(), 0.0, fs)]
            }
            Self::BandPass { stopband_low_hz, passband_low_hz, passband_high_hz, stopband_high_hz } => {
                let pass: Vec<f64> = log_up(passband_low_hz).into_iter().filter(|&f| f <= passband_high_hz).collect();
                vec![
                    merge(linear(passband_low_hz, passband_high_hz), pass, passband_low_hz, passband_high_hz),
                    merge(log_down(stopband_low_hz), Vec::new(), 0.0, stopband_low_hz),
                    merge(log_up(stopband_high_hz), Vec::new(), stopband_high_hz, f64::INFINITY),
                ]
            }
        }
    }
}

impl MaskRegion {
    /// A short lower-case name.
    pub fn name(self) -> &'static str {
        match self {
            Self::Passband => "passband",
            Self::Stopband => "stopband",
            Self::GroupDelay => "passband group delay",
        }
    }
}

impl MaskReport {
    /// The region with the smallest margin as a fraction of its limit (so a failing region comes
    /// first, and dB and seconds compare fairly).
    pub fn worst(&self) -> &RegionMargin {
        let mut worst = &self.passband;
        for candidate in [Some(&self.stopband), self.group_delay.as_ref()].into_iter().flatten() {
            if candidate.margin / candidate.limit < worst.margin / worst.limit {
                worst = candidate;
            }
        }
        worst
    }
}

impl fmt::Display for MaskError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::BadFrequency { what, value_hz } => {
                write!(f, "the mask's {what} {value_hz} Hz is not usable; give a finite frequency above 0 Hz")
            }
            Self::BadLevel { what, value_db } => {
                write!(f, "the mask's {what} {value_db} dB is not usable; give a finite level above 0 dB")
            }
            Self::BadDelay { value_s } => write!(
                f,
                "the group-delay variation limit {value_s} s is not usable; give a finite time above 0 s, or leave it out"
            ),
            Self::EdgeOrder { lower, lower_hz, upper, upper_hz } => write!(
                f,
                "the {upper} ({upper_hz} Hz) must lie above the {lower} ({lower_hz} Hz), so that the stopband stays outside the passband; swap or move them"
            ),
            Self::AttenuationNotAboveLoss { max_passband_loss_db, min_stopband_attenuation_db } => write!(
                f,
                "the stopband attenuation {min_stopband_attenuation_db} dB must exceed the passband loss {max_passband_loss_db} dB; ask for more attenuation or less loss"
            ),
            Self::RippleAboveLoss { ripple_db, max_passband_loss_db } => write!(
                f,
                "a chebyshev ripple of {ripple_db} dB exceeds the mask's passband loss of {max_passband_loss_db} dB; use a ripple of at most {max_passband_loss_db} dB"
            ),
            Self::NoOrderToChoose { alignment } => write!(
                f,
                "a {alignment} section has a fixed order, so there is no minimum order to find; choose butterworth, chebyshev, bessel, linkwitz-riley or critical"
            ),
            Self::Prototype(error) => write!(f, "{error}"),
            Self::Unreachable { alignment, closest_order, shortfall_db, group_delay_shortfall_s } => {
                write!(f, "no {} order up to {MAX_ORDER} meets the mask; order {closest_order} comes closest", alignment.name())?;
                if *shortfall_db > 0.0 {
                    write!(
                        f,
                        ", missing both the passband and the stopband limit by {shortfall_db:.2} dB at its best cutoff; relax the mask: move the stopband edge further from the passband edge, ask for less stopband attenuation or allow more passband loss"
                    )
                } else {
                    write!(
                        f,
                        " and meets the gain limits, but its passband group delay varies {group_delay_shortfall_s:.3e} s more than allowed; allow more group-delay variation, narrow the passband or try bessel"
                    )
                }
            }
            Self::LengthMismatch { frequencies, gains, group_delays } => write!(
                f,
                "{frequencies} frequencies, {gains} gains and {group_delays} group delays were given; give one gain per frequency, and one group delay per frequency when the mask limits the delay"
            ),
            Self::NotCovered { region, f_lo_hz, f_hi_hz, skipped } => write!(
                f,
                "no usable point lies in the {} ({f_lo_hz} Hz to {f_hi_hz} Hz; {skipped} points skipped); sweep a range that covers it",
                region.name()
            ),
        }
    }
}

impl std::error::Error for MaskError {}

/// Gains below this (including H = 0) are taken as this, in dB: far below any stopband limit.
const GAIN_FLOOR_DB: f64 = -400.0;
/// Points per decade of the logarithmic sampling grids.
const LOG_PER_DECADE: usize = 64;
/// Decades sampled beyond a stopband edge (and above a high-pass passband edge).
const SAMPLE_DECADES: usize = 6;
/// Intervals of the linear passband grid.
const LINEAR_POINTS: usize = 512;
/// Golden-section steps per extremum: 0.618^80 ≈ 2e-17 of the bracket.
const GOLDEN_STEPS: usize = 80;
/// Extrema that stand out from their neighbours by less than this (dB or relative delay) are not
/// refined: the grid value is then within about this much of the true extremum.
const REFINE_THRESHOLD: f64 = 1e-11;
/// A report passes when no margin is below −this (dB, or this fraction of the delay limit): rounding
/// in the evaluation and in the bisections that place a cutoff.
const PASS_TOLERANCE: f64 = 1e-9;

fn decade_step(k: usize) -> f64 {
    10f64.powf(k as f64 / LOG_PER_DECADE as f64)
}

/// 20·log10|H(j·2π·f)|, floored at [`GAIN_FLOOR_DB`].
fn design_gain_db(design: &Zpk, f_hz: f64) -> f64 {
    let h = design.eval(Complex64::new(0.0, std::f64::consts::TAU * f_hz));
    crate::response::magnitude_db(h).unwrap_or(GAIN_FLOOR_DB).max(GAIN_FLOOR_DB)
}

/// The group delay of a zero-pole-gain H at f, in seconds (module docs of [`check_design`]).
fn design_delay_s(design: &Zpk, f_hz: f64) -> f64 {
    let omega = std::f64::consts::TAU * f_hz;
    let term = |r: &Complex64| {
        let denominator = r.re * r.re + (omega - r.im) * (omega - r.im);
        // A zero on the jω axis exactly at ω adds a phase step, not a delay.
        if denominator > 0.0 {
            -r.re / denominator
        } else {
            0.0
        }
    };
    design.poles.iter().map(term).sum::<f64>() - design.zeros.iter().map(term).sum::<f64>()
}

#[derive(Clone, Copy, PartialEq)]
enum Pick {
    GainMax,
    GainMin,
    DelayMax,
    DelayMin,
}

/// The refined frequencies of the interior local extrema of one sampled segment.
fn refine_extrema(design: &Zpk, values: &[(f64, f64, f64)], pick: Pick) -> Vec<f64> {
    let value = |f: f64| -> f64 {
        match pick {
            Pick::GainMax => design_gain_db(design, f),
            Pick::GainMin => -design_gain_db(design, f),
            Pick::DelayMax => design_delay_s(design, f),
            Pick::DelayMin => -design_delay_s(design, f),
        }
    };
    let sampled = |v: &(f64, f64, f64)| match pick {
        Pick::GainMax => v.1,
        Pick::GainMin => -v.1,
        Pick::DelayMax => v.2,
        Pick::DelayMin => -v.2,
    };
    let mut found = Vec::new();
    for idx in 1..values.len().saturating_sub(1) {
        let (left, centre, right) = (sampled(&values[idx - 1]), sampled(&values[idx]), sampled(&values[idx + 1]));
        let scale =
            if matches!(pick, Pick::DelayMax | Pick::DelayMin) { centre.abs().max(f64::MIN_POSITIVE) } else { 1.0 };
        let stands_out = centre - left.max(right) >= 0.0 && centre - left.min(right) > REFINE_THRESHOLD * scale;
        if stands_out {
            found.push(golden_maximum(values[idx - 1].0, values[idx + 1].0, &value));
        }
    }
    found
}

/// The argument of the maximum of a unimodal function on [a, b], by golden-section search.
fn golden_maximum(mut a: f64, mut b: f64, value: &impl Fn(f64) -> f64) -> f64 {
    let ratio = (5f64.sqrt() - 1.0) / 2.0;
    let mut x1 = b - ratio * (b - a);
    let mut x2 = a + ratio * (b - a);
    let (mut v1, mut v2) = (value(x1), value(x2));
    for _ in 0..GOLDEN_STEPS {
        if v1 >= v2 {
            b = x2;
            x2 = x1;
            v2 = v1;
            x1 = b - ratio * (b - a);
            v1 = value(x1);
        } else {
            a = x1;
            x1 = x2;
            v1 = v2;
            x2 = a + ratio * (b - a);
            v2 = value(x2);
        }
        if b - a <= 4.0 * f64::EPSILON * b.abs() {
            break;
        }
    }
    if v1 >= v2 {
        x1
    } else {
        x2
    }
}

/// The outcome of trying one order.
struct Attempt {
    order: usize,
    choice: Option<OrderChoice>,
    shortfall_db: f64,
    delay_shortfall_s: f64,
}

/// The real-valued order from the closed form, for Butterworth and for Chebyshev with ripple equal
/// to the mask's passband loss, on the low-pass-equivalent Ω_s (module docs).
fn closed_form_order(mask: &SpecMask, alignment: Alignment) -> Option<f64> {
    let omega_s = mask.band.omega_stop();
    let ratio = (10f64.powf(mask.min_stopband_attenuation_db / 10.0) - 1.0)
        / (10f64.powf(mask.max_passband_loss_db / 10.0) - 1.0);
    match alignment {
        Alignment::Butterworth => Some(ratio.log10() / (2.0 * omega_s.log10())),
        Alignment::Chebyshev { ripple_db } if ripple_db == mask.max_passband_loss_db => {
            Some(ratio.sqrt().acosh() / omega_s.acosh())
        }
        _ => None,
    }
}

/// Tries one order: places the cutoff range, verifies the design at the geometric mean.
fn attempt(mask: &SpecMask, alignment: Alignment, order: usize) -> Result<Attempt, MaskError> {
    let prototype = lowpass_prototype(alignment, order).map_err(MaskError::Prototype)?;
    let shape = Shape::of(alignment, order, &prototype);
    let c_pass = shape.passband_limit(mask.max_passband_loss_db);
    let c_stop = shape.stopband_limit(mask.band.omega_stop(), mask.min_stopband_attenuation_db);
    let design_at = |c: f64| -> Result<(Band, MaskReport), MaskError> {
        let band = mask.band.design_band(c);
        let design = denormalize(&prototype, mask.band.response_type(), band).map_err(MaskError::Prototype)?;
        Ok((band, check_design(mask, &design)?))
    };
    let mut c_low = c_pass;
    let mut delay_blocks = false;
    if let Some(limit) = mask.max_group_delay_variation_s {
        let delay_margin = |c: f64| -> Result<f64, MaskError> {
            let (_, report) = design_at(c)?;
            Ok(report.group_delay.map_or(f64::INFINITY, |g| g.margin) / limit)
        };
        if delay_margin(c_pass)? < 0.0 {
            if c_stop <= c_pass || delay_margin(c_stop)? < 0.0 {
                // Not met within the range the gain limits allow: report the best it can do there.
                delay_blocks = true;
                c_low = c_stop.max(c_pass);
            } else {
                // Smallest c in (c_pass, c_stop] with a non-negative delay margin (it grows with c).
                let (mut bad, mut good) = (c_pass, c_stop);
                for _ in 0..BISECTION_STEPS {
                    let mid = (bad * good).sqrt();
                    if mid <= bad || mid >= good {
                        break;
                    }
                    if delay_margin(mid)? >= 0.0 {
                        good = mid;
                    } else {
                        bad = mid;
                    }
                }
                c_low = good;
            }
        }
    }
    let c_design = if c_pass > c_stop {
        // The gain limits cannot both be met: the cutoff where the two margins are equal, so the
        // shortfall is the least amount by which both limits would have to be relaxed.
        shape.balanced(mask, c_stop, c_pass)
    } else if delay_blocks {
        c_stop
    } else {
        (c_low * c_stop).sqrt()
    };
    let (band, report) = design_at(c_design)?;
    let delay_margin = report.group_delay.map_or(0.0, |g| g.margin / g.limit);
    let fits = !delay_blocks
        && c_low <= c_stop
        && report.passband.margin >= -PASS_TOLERANCE
        && report.stopband.margin >= -PASS_TOLERANCE
        && delay_margin >= -PASS_TOLERANCE;
    let shortfall_db = (-report.worst_margin_db).max(0.0);
    let delay_shortfall_s = report.group_delay.map_or(0.0, |g| (-g.margin).max(0.0));
    let choice = fits.then(|| OrderChoice {
        alignment,
        order,
        closed_form_order: None,
        band,
        passband_limited: mask.band.design_band(c_low),
        stopband_limited: mask.band.design_band(c_stop),
        report: report.clone(),
    });
    Ok(Attempt { order, choice, shortfall_db, delay_shortfall_s })
}

/// Bisection steps on a ratio: each halves the log-interval, so 200 reach f64 resolution from
/// any bracket within 1e±300.
const BISECTION_STEPS: usize = 200;

/// What the cutoff placement needs to know about a normalised prototype's gain.
struct Shape<'a> {
    prototype: &'a Zpk,
    /// For Chebyshev I: (the lowest and the highest 0 dB peak frequency); `None` for the
    /// monotone alignments.
    ripple_peaks: Option<(f64, f64)>,
}

impl<'a> Shape<'a> {
    fn of(alignment: Alignment, order: usize, prototype: &'a Zpk) -> Self {
        let ripple_peaks = match alignment {
            Alignment::Chebyshev { .. } => {
                let n = order as f64;
                // Zeros of T_n: cos((2k − 1)π/(2n)); for odd n the lowest is ω = 0.
                let lowest = if order % 2 == 1 { 0.0 } else { (std::f64::consts::PI / (2.0 * n)).sin() };
                let highest = (std::f64::consts::PI / (2.0 * n)).cos();
                Some((lowest, highest))
            }
            _ => None,
        };
        Self { prototype, ripple_peaks }
    }

    fn gain_db(&self, omega: f64) -> f64 {
        let h = self.prototype.eval(Complex64::new(0.0, omega));
        crate::response::magnitude_db(h).unwrap_or(GAIN_FLOOR_DB).max(GAIN_FLOOR_DB)
    }

    /// The largest gain over 0 ≤ ω ≤ x.
    fn passband_reference_db(&self, x: f64) -> f64 {
        match self.ripple_peaks {
            Some((lowest, _)) if x >= lowest => self.gain_db(lowest),
            Some(_) => self.gain_db(x),
            None => self.gain_db(0.0),
        }
    }

    /// The largest gain over ω ≥ x.
    fn stopband_max_db(&self, x: f64) -> f64 {
        match self.ripple_peaks {
            Some((_, highest)) if x <= highest => self.gain_db(highest),
            _ => self.gain_db(x),
        }
    }

    /// c_pass: the smallest cutoff position that keeps the passband loss within `loss_db`.
    ///
    /// For a monotone prototype, the largest x with gain(0) − gain(x) ≤ loss; for Chebyshev I (ripple
    /// ≤ loss) the loss up to x ≤ 1 is at most the ripple, so x ≥ 1, from the peak. Then c = 1/x.
    fn passband_limit(&self, loss_db: f64) -> f64 {
        let low = if self.ripple_peaks.is_some() { 1.0 } else { 1e-6 };
        let loss = |x: f64| self.passband_reference_db(x) - self.gain_db(x);
        if loss(low) > loss_db {
            return 1.0 / low;
        }
        let (mut good, mut bad) = (low, 1e6);
        for _ in 0..BISECTION_STEPS {
            let mid = (good * bad).sqrt();
            if mid <= good || mid >= bad {
                break;
            }
            if loss(mid) <= loss_db {
                good = mid;
            } else {
                bad = mid;
            }
        }
        1.0 / good
    }

    /// The passband margin (dB) with the cutoff at c.
    fn passband_margin(&self, loss_db: f64, c: f64) -> f64 {
        loss_db - (self.passband_reference_db(1.0 / c) - self.gain_db(1.0 / c))
    }

    /// The stopband margin (dB) with the cutoff at c.
    fn stopband_margin(&self, omega_s: f64, attenuation_db: f64, c: f64) -> f64 {
        self.passband_reference_db(1.0 / c) - self.stopband_max_db(omega_s / c) - attenuation_db
    }

    /// For c_stop < c_pass: the c in between where the passband and stopband margins are equal (the
    /// first rises with c, the second falls), by bisection.
    fn balanced(&self, mask: &SpecMask, c_stop: f64, c_pass: f64) -> f64 {
        let omega_s = mask.band.omega_stop();
        let difference = |c: f64| {
            self.passband_margin(mask.max_passband_loss_db, c)
                - self.stopband_margin(omega_s, mask.min_stopband_attenuation_db, c)
        };
        let (mut low, mut high) = (c_stop, c_pass);
        for _ in 0..BISECTION_STEPS {
            let mid = (low * high).sqrt();
            if mid <= low || mid >= high {
                break;
            }
            if difference(mid) < 0.0 {
                low = mid;
            } else {
                high = mid;
            }
        }
        (low * high).sqrt()
    }

    /// c_stop: the largest cutoff position c for which every Ω ≥ Ω_s is attenuated by at least
    /// `attenuation_db` from the passband reference (the largest gain over 0 ≤ Ω ≤ 1/c). The margin
    /// falls as c grows, so bisection applies.
    fn stopband_limit(&self, omega_s: f64, attenuation_db: f64) -> f64 {
        let margin = |c: f64| self.stopband_margin(omega_s, attenuation_db, c);
        let (mut good, mut bad) = (omega_s * 1e-6, omega_s * 1e6);
        if margin(good) < 0.0 {
            return good;
        }
        for _ in 0..BISECTION_STEPS {
            let mid = (good * bad).sqrt();
            if mid <= good || mid >= bad {
                break;
            }
            if margin(mid) >= 0.0 {
                good = mid;
            } else {
                bad = mid;
            }
        }
        good
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::circuit::CircuitBuilder;
    use crate::mna::{AcSystem, Detail, Probe};
    use crate::sweep::{sweep, FrequencyGrid, Spacing};

    const BESSEL: Alignment = Alignment::Bessel { normalization: BesselNormalization::Magnitude };

    fn lowpass(fp: f64, fs: f64, loss: f64, attenuation: f64) -> SpecMask {
        SpecMask {
            band: MaskBand::LowPass { passband_edge_hz: fp, stopband_edge_hz: fs },
            max_passband_loss_db: loss,
            min_stopband_attenuation_db: attenuation,
            max_group_delay_variation_s: None,
        }
    }

    /// The one helper of this area: the minimum order of `alignment` for `mask` is `expected`, and the
    /// recommended design meets the mask with both margins ≥ 0.
    fn check_order(mask: &SpecMask, alignment: Alignment, expected: usize) -> OrderChoice {
        let choice = minimum_order(mask, alignment).unwrap_or_else(|e| panic!("{alignment:?}: {e}"));
        assert_eq!(choice.order, expected, "{alignment:?} for {mask:?}");
        assert!(choice.report.pass, "{alignment:?}: {:?}", choice.report);
        assert!(choice.report.passband.margin >= -PASS_TOLERANCE && choice.report.stopband.margin >= -PASS_TOLERANCE);
        if expected > 1 && alignment != Alignment::LinkwitzRiley {
            let below = lowpass_prototype(alignment, expected - 1).unwrap();
            let design = denormalize(&below, mask.band.response_type(), choice.band).unwrap();
            assert!(!check_design(mask, &design).unwrap().pass, "order {} also meets at the same cutoff", expected - 1);
        }
        choice
    }

    fn unreachable(mask: &SpecMask, alignment: Alignment) -> (usize, f64, String) {
        match minimum_order(mask, alignment) {
            Err(error @ MaskError::Unreachable { closest_order, shortfall_db, .. }) => {
                (closest_order, shortfall_db, error.to_string())
            }
            other => panic!("{alignment:?}: expected Unreachable, got {other:?}"),
        }
    }

    // Source: references.md §6, scipy.signal.buttord(1, 10, 3, 74, analog=True) returns order 4.
    #[test]
    fn butterworth_order_of_the_adc_example() {
        let choice = check_order(&lowpass(1.0, 10.0, 3.0, 74.0), Alignment::Butterworth, 4);
        // Closed form: log10((10^7.4 − 1)/(10^0.3 − 1))/(2·log10 10) = 3.70 (computed by hand).
        let estimate = choice.closed_form_order.unwrap();
        assert!((estimate - 3.7007).abs() < 1e-3, "{estimate}");
    }

    // Source: scipy.signal.cheb1ord(1, 2, 1, 40, analog=True) = (5, 1.0) and buttord(1, 2, 1, 40,
    // analog=True) = (8, 1.0881) (computed, SciPy 1.17.1).
    #[test]
    fn chebyshev_and_butterworth_orders_match_scipy_by_hand() {
        let mask = lowpass(1000.0, 2000.0, 1.0, 40.0);
        let chebyshev = check_order(&mask, Alignment::Chebyshev { ripple_db: 1.0 }, 5);
        // cheb1ord puts wn at the passband edge; ours lies between that and the stopband limit.
        let (Band::Cutoff(low), Band::Cutoff(high)) = (chebyshev.passband_limited, chebyshev.stopband_limited) else {
            panic!()
        };
        assert!((low - 1000.0).abs() < 1e-9, "{low}");
        let Band::Cutoff(fc) = chebyshev.band else { panic!() };
        assert!((fc - (low * high).sqrt()).abs() < 1e-9 * fc);
        check_order(&mask, Alignment::Butterworth, 8);
    }

    // Source: the closed-form limits of Butterworth (from memory, as in the module docs): the
    // passband-limited cutoff is fp/(10^{Ap/10} − 1)^{1/(2n)}, the stopband-limited one
    // fs/(10^{As/10} − 1)^{1/(2n)}. Both are bisection results here, to f64 resolution.
    #[test]
    fn butterworth_cutoff_limits_match_closed_form() {
        let mask = lowpass(1000.0, 3000.0, 0.5, 45.0);
        let choice = minimum_order(&mask, Alignment::Butterworth).unwrap();
        let n = choice.order as f64;
        let pass = 1000.0 / (10f64.powf(0.05) - 1.0).powf(1.0 / (2.0 * n));
        let stop = 3000.0 / (10f64.powf(4.5) - 1.0).powf(1.0 / (2.0 * n));
        let (Band::Cutoff(low), Band::Cutoff(high)) = (choice.passband_limited, choice.stopband_limited) else {
            panic!()
        };
        assert!((low / pass - 1.0).abs() < 1e-12 && (high / stop - 1.0).abs() < 1e-12, "{low} {pass} {high} {stop}");
        // At the geometric mean the two margins are both positive (log-symmetric placement).
        assert!(choice.report.passband.margin > 0.0 && choice.report.stopband.margin > 0.0);
    }

    // Source: the critically damped gain |H|² = (1 + k·ω²)^−n with k = 2^{1/n} − 1 (prototype
    // definition, common practice), so a mask is met iff Ω_s² ≥ (10^{As/(10n)} − 1)/(10^{Ap/(10n)} − 1):
    // an independent closed form.
    // Source: the Linkwitz-Riley gain |H|² = (1 + ω^n)^−2 (the square of a Butterworth of order n/2,
    // references.md §3.4), so a mask is met iff Ω_s^n ≥ (10^{As/20} − 1)/(10^{Ap/20} − 1).
    #[test]
    fn critical_and_linkwitz_riley_orders_match_their_closed_forms() {
        for (ratio, loss, attenuation) in [(3.0, 1.0, 20.0), (5.0, 0.5, 30.0), (10.0, 3.0, 40.0), (2.5, 2.0, 24.0)] {
            let mask = lowpass(500.0, 500.0 * ratio, loss, attenuation);
            let critical = (1..=MAX_ORDER).find(|&n| {
                let n = n as f64;
                ratio * ratio >= (10f64.powf(attenuation / (10.0 * n)) - 1.0) / (10f64.powf(loss / (10.0 * n)) - 1.0)
            });
            let lr = (2..=MAX_ORDER).step_by(2).find(|&n| {
                ratio.powi(n as i32) >= (10f64.powf(attenuation / 20.0) - 1.0) / (10f64.powf(loss / 20.0) - 1.0)
            });
            match critical {
                Some(n) => {
                    check_order(&mask, Alignment::Critical, n);
                }
                None => assert_eq!(unreachable(&mask, Alignment::Critical).0, MAX_ORDER),
            }
            match lr {
                Some(n) => {
                    check_order(&mask, Alignment::LinkwitzRiley, n);
                }
                None => assert_eq!(unreachable(&mask, Alignment::LinkwitzRiley).0, MAX_ORDER),
            }
        }
    }

    // Source: scipy.signal.besselap(n, norm='mag') swept with freqs_zpk on 400001 log points from
    // 1e−4 to 1e4 rad/s (computed, SciPy 1.17.1): the ratio Ω_s/Ω_p at which order n just meets
    // (Ap, As) is, for (1, 20) dB: 19.55, 6.66, 4.83, …; for (3, 40) dB: …, 12.71, 6.48, 4.73; for
    // (1, 30) dB: …, 12.07, 7.29. The cases sit well between two orders.
    #[test]
    fn bessel_orders_match_scipy_sweeps() {
        check_order(&lowpass(1000.0, 6000.0, 1.0, 20.0), BESSEL, 3);
        check_order(&lowpass(1000.0, 6000.0, 3.0, 40.0), BESSEL, 4);
        check_order(&lowpass(1000.0, 8000.0, 1.0, 30.0), BESSEL, 3);
    }

    // Source: the low-pass to high-pass substitution s → ωc/s (common practice) maps a high-pass
    // mask with fp/fs = r onto a low-pass mask with fs/fp = r, so the orders agree.
    #[test]
    fn highpass_orders_mirror_lowpass() {
        let high = SpecMask {
            band: MaskBand::HighPass { passband_edge_hz: 2000.0, stopband_edge_hz: 200.0 },
            ..lowpass(1.0, 10.0, 3.0, 74.0)
        };
        for alignment in mask_alignments(&high) {
            let from_low = minimum_order(&lowpass(1.0, 10.0, 3.0, 74.0), alignment).map(|c| c.order);
            let from_high = minimum_order(&high, alignment).map(|c| c.order);
            match (from_low, from_high) {
                (Ok(a), Ok(b)) => assert_eq!(a, b, "{alignment:?}"),
                (Err(MaskError::Unreachable { .. }), Err(MaskError::Unreachable { .. })) => {}
                other => panic!("{alignment:?}: {other:?}"),
            }
        }
        let choice = check_order(&high, Alignment::Butterworth, 4);
        let Band::Cutoff(fc) = choice.band else { panic!() };
        assert!(fc < 2000.0 && fc > 200.0, "{fc}");
    }

    // Source: the band-pass substitution s → (s² + ω0²)/(B·s) (common practice): a geometrically
    // symmetric band-pass mask with f_sl·f_sh = f_pl·f_ph maps onto Ω_s = (f_sh − f_sl)/(f_ph − f_pl).
    #[test]
    fn bandpass_orders_follow_the_lowpass_equivalent() {
        let mask = SpecMask {
            band: MaskBand::BandPass {
                stopband_low_hz: 250.0,
                passband_low_hz: 1000.0,
                passband_high_hz: 2000.0,
                stopband_high_hz: 8000.0,
            },
            ..lowpass(1.0, 7.0, 1.0, 40.0)
        };
        for alignment in mask_alignments(&mask) {
            let from_low = minimum_order(&lowpass(1.0, 7.0, 1.0, 40.0), alignment).map(|c| c.order);
            let choice = minimum_order(&mask, alignment);
            match (from_low, &choice) {
                (Ok(a), Ok(b)) => {
                    assert_eq!(a, b.order, "{alignment:?}");
                    assert!(b.report.pass);
                    let Band::Edges { low_hz, high_hz } = b.band else { panic!() };
                    assert!((low_hz * high_hz / 2e6 - 1.0).abs() < 1e-12, "centre kept: {low_hz} {high_hz}");
                }
                (Err(MaskError::Unreachable { .. }), Err(MaskError::Unreachable { .. })) => {}
                other => panic!("{alignment:?}: {other:?}"),
            }
        }
    }

    #[test]
    fn unreachable_mask_names_the_closest_order() {
        let mask = lowpass(1000.0, 1100.0, 0.5, 80.0);
        for alignment in [Alignment::Butterworth, Alignment::Chebyshev { ripple_db: 0.5 }, Alignment::Critical] {
            let (closest, shortfall, message) = unreachable(&mask, alignment);
            assert_eq!(closest, MAX_ORDER, "{alignment:?}");
            assert!(shortfall > 10.0, "{alignment:?}: {shortfall}");
            assert!(message.contains("no ") && message.contains("order up to 8"), "{message}");
            assert!(message.contains("order 8 comes closest") && message.contains("relax the mask"), "{message}");
        }
        let orders = minimum_orders(&mask).unwrap();
        assert!(orders.met.is_empty());
        assert_eq!(orders.unmet.len(), 5);
    }

    #[test]
    fn minimum_orders_lists_best_first() {
        let orders = minimum_orders(&lowpass(1000.0, 2000.0, 1.0, 40.0)).unwrap();
        let found: Vec<(&str, usize)> = orders.met.iter().map(|c| (c.alignment.name(), c.order)).collect();
        assert_eq!(found[0], ("chebyshev", 5), "{found:?}");
        assert!(found.windows(2).all(|w| w[0].1 <= w[1].1), "{found:?}");
        assert!(found.contains(&("butterworth", 8)));
        assert_eq!(orders.met.len() + orders.unmet.len(), 5);
    }

    // Source: the group delay of an all-pole H, τ = Σ −Re p/|jω − p|² (references.md §7): a
    // Butterworth n = 4 low-pass at 1 kHz peaks near its cutoff, so its variation over a
    // 1 kHz passband is several times that of a Bessel.
    #[test]
    fn group_delay_limit_raises_the_order_or_rules_an_alignment_out() {
        let base = lowpass(1000.0, 6000.0, 3.0, 40.0);
        let butterworth = minimum_order(&base, Alignment::Butterworth).unwrap();
        let bessel = minimum_order(&base, BESSEL).unwrap();
        let variation = |c: &OrderChoice| {
            let design =
                denormalize(&lowpass_prototype(c.alignment, c.order).unwrap(), ResponseType::LowPass, c.band).unwrap();
            let limited = SpecMask { max_group_delay_variation_s: Some(1.0), ..base };
            check_design(&limited, &design).unwrap().group_delay.unwrap().measured
        };
        let (tau_butterworth, tau_bessel) = (variation(&butterworth), variation(&bessel));
        assert!(tau_bessel < tau_butterworth / 2.0, "{tau_bessel} vs {tau_butterworth}");
        // A limit between the two: Bessel still meets it at its order; Butterworth either moves its
        // cutoff (a higher passband-limited cutoff) or fails on the delay.
        let limit = (tau_bessel * tau_butterworth).sqrt();
        let limited = SpecMask { max_group_delay_variation_s: Some(limit), ..base };
        let bessel_limited = minimum_order(&limited, BESSEL).unwrap();
        assert_eq!(bessel_limited.order, bessel.order);
        let delay = bessel_limited.report.group_delay.unwrap();
        assert!(delay.margin >= 0.0 && delay.measured <= limit);
        match minimum_order(&limited, Alignment::Butterworth) {
            Ok(choice) => {
                assert!(choice.report.group_delay.unwrap().margin >= -PASS_TOLERANCE * limit);
                let (Band::Cutoff(new), Band::Cutoff(old)) = (choice.passband_limited, butterworth.passband_limited)
                else {
                    panic!()
                };
                assert!(choice.order > butterworth.order || new > old, "{choice:?}");
            }
            Err(error) => assert!(error.to_string().contains("group delay"), "{error}"),
        }
        // A limit no alignment can meet names the delay.
        let impossible = SpecMask { max_group_delay_variation_s: Some(tau_bessel * 1e-4), ..base };
        let message = minimum_order(&impossible, Alignment::Butterworth).unwrap_err().to_string();
        assert!(message.contains("meets the gain limits") && message.contains("group-delay variation"), "{message}");
    }

    fn rc_response(points: usize) -> Response {
        let mut builder = CircuitBuilder::new();
        builder
            .voltage_source("V1", "in", "0", 1.0, 0.0)
            .resistor("R1", "in", "out", 1e3)
            .capacitor("C1", "out", "0", 1e-7);
        let circuit = builder.build().unwrap();
        let probe = Probe::new(&circuit, "V1", "out", "0").unwrap();
        let grid = FrequencyGrid::log(1.0, 1e6, Spacing::Points(points)).unwrap();
        sweep(&mut AcSystem::new(&circuit, &probe), &grid, Detail::Transfer)
    }

    // Source: closed form of the first-order RC low-pass, |H|² = 1/(1 + (f/fc)²), fc = 1/(2πRC)
    // (common practice). On a grid with points exactly at the edges the margins are exact.
    #[test]
    fn check_of_a_swept_rc_lowpass_matches_its_closed_form() {
        let fc = 1.0 / (std::f64::consts::TAU * 1e3 * 1e-7);
        let response = rc_response(61); // 10 points per decade: 1, 1.26, …, 1e3, …, 1e4, …
        let (fp, fs) = (1000.0, 10000.0);
        let loss_db = |f: f64| 10.0 * (1.0 + (f / fc).powi(2)).log10();
        let mask = lowpass(fp, fs, 1.5, 14.0);
        let report = check(&mask, &response).unwrap();
        // The reference is the largest passband gain, at the lowest swept frequency (1 Hz); the worst
        // points are the last swept point in the passband and the first in the stopband.
        let grid = response.frequencies();
        let last_pass = grid.iter().copied().filter(|&f| f <= fp).fold(0.0, f64::max);
        let first_stop = grid.iter().copied().filter(|&f| f >= fs).fold(f64::INFINITY, f64::min);
        assert_eq!(report.reference_f_hz, 1.0);
        assert_eq!((report.passband.f_hz, report.stopband.f_hz), (last_pass, first_stop));
        let expected_loss = loss_db(last_pass) - loss_db(1.0);
        assert!((report.passband.measured - expected_loss).abs() < 1e-9, "{:?}", report.passband);
        let expected_attenuation = loss_db(first_stop) - loss_db(1.0);
        assert!((report.stopband.measured - expected_attenuation).abs() < 1e-9, "{:?}", report.stopband);
        // fc = 1591.5 Hz: about 1.43 dB loss at 1 kHz (limit 1.5) and 16 dB or more beyond 10 kHz.
        assert!(report.pass && report.worst_region == MaskRegion::Passband, "{report:?}");
        assert_eq!(report.skipped, 0);
        // Tighter: 1.0 dB loss fails in the passband with the margin of the closed form.
        let tight = lowpass(fp, fs, 1.0, 14.0);
        let report = check(&tight, &response).unwrap();
        assert!(!report.pass && (report.worst_margin_db - (1.0 - expected_loss)).abs() < 1e-9);
        assert_eq!(report.worst(), &report.passband);
    }

    #[test]
    fn check_skips_unsolved_points_and_never_yields_nan() {
        let f = vec![0.0, 100.0, 1000.0, 5000.0, 20000.0, f64::NAN];
        let gains = vec![Some(0.0), None, Some(-0.5), Some(f64::NAN), Some(-60.0), Some(0.0)];
        let report = check_points(&lowpass(1000.0, 10000.0, 1.0, 40.0), &f, &gains, &[]).unwrap();
        assert_eq!(report.skipped, 3);
        assert_eq!((report.passband.points, report.stopband.points), (2, 1));
        assert!((report.passband.margin - 0.5).abs() < 1e-15 && (report.stopband.margin - 20.0).abs() < 1e-15);
        for value in [report.worst_margin_db, report.worst_f_hz, report.reference_gain_db] {
            assert!(value.is_finite());
        }
        // Nothing usable in the stopband: say so, with the region.
        let error = check_points(&lowpass(1000.0, 10000.0, 1.0, 40.0), &f[..4], &gains[..4], &[]).unwrap_err();
        assert!(matches!(error, MaskError::NotCovered { region: MaskRegion::Stopband, skipped: 2, .. }), "{error:?}");
        assert!(error.to_string().contains("sweep a range that covers it"), "{error}");
        let error = check_points(&lowpass(1000.0, 10000.0, 1.0, 40.0), &f, &gains[..2], &[]).unwrap_err();
        assert!(matches!(error, MaskError::LengthMismatch { frequencies: 6, gains: 2, group_delays: 0 }));
        let limited = SpecMask { max_group_delay_variation_s: Some(1e-3), ..lowpass(1000.0, 10000.0, 1.0, 40.0) };
        assert!(matches!(check_points(&limited, &f, &gains, &[]), Err(MaskError::LengthMismatch { .. })));
    }

    // Source: scipy.signal.cheb1ord designs with wn at the passband edge, where the ripple-edge loss
    // is exactly the ripple (cheb1ap docstring): the passband margin is 0 to rounding, and the
    // evaluation must see the 0 dB ripple peaks (refined), not a grid point just below them.
    #[test]
    fn design_check_finds_the_ripple_peaks() {
        let mask = lowpass(1000.0, 1500.0, 0.5, 30.0);
        for order in [4, 5, 8] {
            let prototype = lowpass_prototype(Alignment::Chebyshev { ripple_db: 0.5 }, order).unwrap();
            let design = denormalize(&prototype, ResponseType::LowPass, Band::Cutoff(1000.0)).unwrap();
            let report = check_design(&mask, &design).unwrap();
            assert!(report.reference_gain_db.abs() < 1e-12, "n = {order}: peak {}", report.reference_gain_db);
            assert!(report.passband.margin.abs() < 1e-9, "n = {order}: {:?}", report.passband);
        }
    }

    fn validation_error(mask: SpecMask) -> MaskError {
        let error = mask.validate().unwrap_err();
        assert_eq!(minimum_order(&mask, Alignment::Butterworth).unwrap_err().to_string(), error.to_string());
        error
    }

    #[test]
    fn validation_names_the_offending_value() {
        let error = validation_error(lowpass(1000.0, 900.0, 1.0, 40.0));
        assert_eq!(
            error,
            MaskError::EdgeOrder { lower: "passband edge", lower_hz: 1000.0, upper: "stopband edge", upper_hz: 900.0 }
        );
        assert!(error.to_string().contains("stopband edge (900 Hz) must lie above the passband edge (1000 Hz)"));
        let high = SpecMask {
            band: MaskBand::HighPass { passband_edge_hz: 1000.0, stopband_edge_hz: 1000.0 },
            ..lowpass(1.0, 2.0, 1.0, 40.0)
        };
        assert!(matches!(validation_error(high), MaskError::EdgeOrder { lower: "stopband edge", .. }));
        let band = SpecMask {
            band: MaskBand::BandPass {
                stopband_low_hz: 500.0,
                passband_low_hz: 1000.0,
                passband_high_hz: 2000.0,
                stopband_high_hz: 1500.0,
            },
            ..lowpass(1.0, 2.0, 1.0, 40.0)
        };
        assert!(matches!(validation_error(band), MaskError::EdgeOrder { upper: "upper stopband edge", .. }));
        for value in [0.0, -1.0, f64::NAN, f64::INFINITY] {
            let error = validation_error(lowpass(value, 2000.0, 1.0, 40.0));
            assert!(
                matches!(error, MaskError::BadFrequency { what: "passband edge", value_hz } if value_hz.to_bits() == value.to_bits())
            );
            assert!(error.to_string().contains("finite frequency above 0 Hz"), "{error}");
            let error = validation_error(lowpass(1000.0, 2000.0, value, 40.0));
            assert!(matches!(error, MaskError::BadLevel { what: "passband loss", .. }), "{error:?}");
            let error = validation_error(lowpass(1000.0, 2000.0, 1.0, value));
            assert!(matches!(error, MaskError::BadLevel { what: "stopband attenuation", .. }), "{error:?}");
            let error =
                validation_error(SpecMask { max_group_delay_variation_s: Some(value), ..lowpass(1.0, 2.0, 1.0, 40.0) });
            assert!(matches!(error, MaskError::BadDelay { .. }), "{error:?}");
        }
        let error = validation_error(lowpass(1000.0, 2000.0, 3.0, 3.0));
        assert!(error.to_string().contains("must exceed the passband loss 3 dB"), "{error}");
        assert!(lowpass(1000.0, 2000.0, 3.0, 3.5).validate().is_ok());
    }

    #[test]
    fn alignment_errors() {
        let mask = lowpass(1000.0, 2000.0, 0.5, 40.0);
        let error = minimum_order(&mask, Alignment::Chebyshev { ripple_db: 1.0 }).unwrap_err();
        assert_eq!(error, MaskError::RippleAboveLoss { ripple_db: 1.0, max_passband_loss_db: 0.5 });
        assert!(error.to_string().contains("use a ripple of at most 0.5 dB"), "{error}");
        let error = minimum_order(&mask, Alignment::Chebyshev { ripple_db: -1.0 }).unwrap_err();
        assert!(matches!(error, MaskError::Prototype(SynthesisError::BadRipple { .. })), "{error:?}");
        let error = minimum_order(&mask, Alignment::Quality { q: 0.7 }).unwrap_err();
        assert!(error.to_string().contains("fixed order"), "{error}");
        // A smaller ripple than the loss is accepted and still meets the mask.
        let choice = minimum_order(&mask, Alignment::Chebyshev { ripple_db: 0.1 }).unwrap();
        assert!(choice.report.pass && choice.closed_form_order.is_none());
    }

    #[test]
    fn regions_describe_the_forbidden_rectangles() {
        let regions = lowpass(1000.0, 4000.0, 1.0, 40.0).regions();
        assert_eq!(
            regions,
            vec![
                ForbiddenRegion {
                    region: MaskRegion::Passband,
                    f_lo_hz: 0.0,
                    f_hi_hz: 1000.0,
                    limit_db: -1.0,
                    forbidden: Forbidden::Below
                },
                ForbiddenRegion {
                    region: MaskRegion::Stopband,
                    f_lo_hz: 4000.0,
                    f_hi_hz: f64::INFINITY,
                    limit_db: -40.0,
                    forbidden: Forbidden::Above
                },
            ]
        );
        let band = SpecMask {
            band: MaskBand::BandPass {
                stopband_low_hz: 500.0,
                passband_low_hz: 1000.0,
                passband_high_hz: 2000.0,
                stopband_high_hz: 4000.0,
            },
            ..lowpass(1.0, 2.0, 1.0, 40.0)
        };
        let spans: Vec<(f64, f64)> = band.regions().iter().map(|r| (r.f_lo_hz, r.f_hi_hz)).collect();
        assert_eq!(spans, vec![(1000.0, 2000.0), (0.0, 500.0), (4000.0, f64::INFINITY)]);
    }

    #[test]
    fn masks_round_trip_through_json() {
        let mask = SpecMask { max_group_delay_variation_s: Some(2e-4), ..lowpass(1000.0, 4000.0, 1.0, 40.0) };
        let text = serde_json::to_string(&mask).unwrap();
        assert!(text.contains(r#""response":"lowpass""#), "{text}");
        assert_eq!(serde_json::from_str::<SpecMask>(&text).unwrap(), mask);
        let text = r#"{"band":{"response":"highpass","passband_edge_hz":100,"stopband_edge_hz":20},
            "max_passband_loss_db":1,"min_stopband_attenuation_db":30}"#;
        let mask: SpecMask = serde_json::from_str(text).unwrap();
        assert_eq!(mask.band, MaskBand::HighPass { passband_edge_hz: 100.0, stopband_edge_hz: 20.0 });
        assert!(serde_json::from_str::<SpecMask>(&text.replace("max_passband", "maximum_passband")).is_err());
    }

    proptest::proptest! {
        #![proptest_config(proptest::prelude::ProptestConfig::with_cases(24))]
        // Any valid mask, however extreme, gets an answer for every alignment without a panic or a NaN:
        // a met order with a passing report, or an Unreachable error with finite shortfalls.
        #[test]
        fn any_valid_mask_gets_finite_answers(
            high_pass in proptest::bool::ANY,
            edge_exp in -2.0f64..7.0,
            ratio_exp in 0.0001f64..3.0,
            loss_exp in -6.0f64..1.3,
            extra_exp in -3.0f64..3.0,
            delay in proptest::option::of(1e-9f64..1.0),
        ) {
            let edge = 10f64.powf(edge_exp);
            let ratio = 10f64.powf(ratio_exp);
            let loss = 10f64.powf(loss_exp);
            let band = if high_pass {
                MaskBand::HighPass { passband_edge_hz: edge, stopband_edge_hz: edge / ratio }
            } else {
                MaskBand::LowPass { passband_edge_hz: edge, stopband_edge_hz: edge * ratio }
            };
            let mask = SpecMask {
                band,
                max_passband_loss_db: loss,
                min_stopband_attenuation_db: loss + 10f64.powf(extra_exp),
                max_group_delay_variation_s: delay,
            };
            proptest::prop_assume!(mask.validate().is_ok());
            let orders = minimum_orders(&mask).unwrap();
            proptest::prop_assert_eq!(orders.met.len() + orders.unmet.len(), 5);
            for choice in &orders.met {
                proptest::prop_assert!(choice.report.pass, "{:?}", choice);
                proptest::prop_assert!(choice.report.worst_margin_db.is_finite());
            }
            for error in &orders.unmet {
                let MaskError::Unreachable { shortfall_db, group_delay_shortfall_s, closest_order, .. } = error else {
                    return Err(proptest::test_runner::TestCaseError::fail(format!("{error:?}")));
                };
                proptest::prop_assert!(shortfall_db.is_finite() && group_delay_shortfall_s.is_finite());
                proptest::prop_assert!((1..=MAX_ORDER).contains(closest_order));
            }
        }
    }
}
