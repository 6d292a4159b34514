//! LC ladder synthesis: normalised low-pass prototypes (g-values) for orders 1 to 8 and the
//! denormalised lowpass, highpass, bandpass and bandstop ladders built from them.
//!
//! # Conventions
//! The prototype follows Matthaei, Young & Jones, *Microwave Filters, Impedance-Matching Networks
//! and Coupling Structures*, §4.04–4.05 (section numbers from memory; see references.md §2):
//! g0 = 1 Ω is the source, g1..gn are the reactive elements counted from the source, the cutoff is
//! ω = 1 rad/s, and g(n+1) is the load, a **resistance** when gn is a shunt element and a
//! **conductance** when gn is a series element. Position k holds a series inductor or a shunt
//! capacitor. The series-first and shunt-first forms of one set of numbers are duals: they give
//! the same response, and the shunt-first form has the reciprocal load ratio. So equal
//! terminations use one set for both forms, while [`Termination::Ratio`] needs the set of ratio
//! 1/r for a shunt-first ladder ([`prototype_values_for`] takes care of that). With equal
//! terminations a ladder and its reverse give the same response.
//!
//! The response each prototype realises (Ω is the normalised frequency):
//! - doubly terminated ([`Termination::Equal`], [`Termination::Ratio`]): the transducer gain
//!   |S21|² = 4·(Rs/RL)·|V_L/E|² equals |S21(0)|²·F(Ω)/F(0) with |S21(0)|² = 4·r/(1 + r)² and
//!   r = RL/Rs, because an all-pole LC ladder is a through connection at DC;
//! - ideal source ([`Termination::IdealSource`], Rs = 0, load R0): |V_L/E|² = F(Ω)/F(0);
//! - open load ([`Termination::OpenLoad`], source R0, no load): |V_out/E|² = F(Ω)/F(0). With the
//!   source written as its Norton form E/R0 in parallel with R0 this is the transimpedance
//!   V_out/I divided by R0, the current-driven form of the same prototype.
//!
//! Here F(Ω) = 1/(1 + Ω^2n) for Butterworth, 1/(1 + ε²·T_n(Ω)²) for Chebyshev (ε² = 10^(ripple/10) − 1,
//! so even orders have F(0) = 1/(1 + ε²)) and |B(0)/B(jΩ)|² for Bessel with B the reverse Bessel
//! polynomial scaled to the chosen [`BesselNormalization`].
//!
//! # What each alignment supports
//! | Alignment | Equal | Ratio(r), odd n | Ratio(r), even n: series first / shunt first | IdealSource, OpenLoad |
//! |---|---|---|---|---|
//! | Butterworth | closed form | closed form, any r | r ≥ 1 / r ≤ 1 (closed form) | closed form |
//! | Chebyshev | MYJ recursion; even n: natural ratio coth²(β/4) | closed form, any r | r ≥ coth²(β/4) / r ≤ 1/coth²(β/4) (closed form) | continued fraction |
//! | Bessel | Darlington | Darlington, any r | r ≥ r_min / r ≤ 1/r_min (Darlington) | continued fraction |
//! | Linkwitz-Riley (even n), critical | Darlington | Darlington, any r | r ≥ r_min / r ≤ 1/r_min (Darlington) | continued fraction |
//! | f0/Q | not available ([`SynthesisError::Unsupported`]): use an RLC section | | | |
//!
//! Every ratio is thus reachable in one of the two forms. The even-order limits follow from
//! ρ(∞) = +1 for a series first element: R_load < R_source needs ρ(0) < 0, so an odd number of
//! real reflection zeros in the right half-plane. Butterworth and Chebyshev even orders have no
//! real reflection zeros, so their series-first ladders only step the resistance up (and
//! Chebyshev at least by the natural ratio, where K reaches 1). Bessel reflection zeros include
//! a real pair while r ≥ r_min = (1 − √m)/(1 + √m) with m = −min over u > 0 of
//! (D(√u)D(−√u) − D(0)²)/D(0)²; r_min = 1/3 for n = 2 and about 0.1723, 0.1006 and 0.0618 for
//! n = 4, 6 and 8. An ideal source needs a series first element (a shunt element across it does
//! nothing), and an open load needs a shunt element next to the output, which fixes the first
//! element by the parity of the order.
//!
//! # Formulas and their sources
//! a_k = sin((2k−1)π/2n) throughout.
//! - **Butterworth, equal**: g_k = 2·a_k, g(n+1) = 1 (references.md §2.1; RF Cafe's table).
//! - **Butterworth, unequal** (closed form of Takahasi, 1951, as given in Weinberg, *Network
//!   Analysis and Synthesis*, 1962, and Matthaei, "Tables of Chebyshev impedance-transforming
//!   networks", 1964; formula from memory, verified here by sweeping every ladder):
//!   α = (|r − 1|/(r + 1))^(1/n), y = ±α (+ for r ≥ 1), g1 = 2a1/(1 − y),
//!   g_k·g(k+1) = 4·a_k·a(k+1)/(1 − 2y·cos(kπ/n) + y²).
//! - **Butterworth, singly terminated** (same sources, from memory), counted from the resistor:
//!   g1 = a1, g_k = a(k−1)·a_k/(c(k−1)·g(k−1)) with c_k = cos²(kπ/2n). Checked against the
//!   continued-fraction route below and by sweep.
//! - **Chebyshev, equal**: the MYJ recursion of references.md §2.2 (formula reference from
//!   memory): β = ln coth(L_r/17.3718), γ = sinh(β/2n), b_k = γ² + sin²(kπ/n), g1 = 2a1/γ,
//!   g_k = 4·a(k−1)·a_k/(b(k−1)·g(k−1)), g(n+1) = 1 for odd n and coth²(β/4) for even n.
//! - **Chebyshev, unequal** (Takahasi's closed form, same sources as above, from memory):
//!   |S21|² = K/(1 + ε²T_n²) with K = 4r/(1 + r)²·(1 + ε²·T_n(0)²) ≤ 1; δ = √(1 − K)/ε,
//!   x = γ = sinh(asinh(1/ε)/n), y = ±sinh(asinh(δ)/n); g1 = 2a1/(x − y),
//!   g_k·g(k+1) = 4·a_k·a(k+1)/(x² + y² + sin²(kπ/n) − 2xy·cos(kπ/n)). K ≤ 1 is the limit on r for
//!   even orders.
//! - **Singly terminated Chebyshev and Bessel**: with D(s) = m(s) + n(s) split into its even and
//!   odd parts, H = D(0)/D(s) is realised by the Cauer continued-fraction expansion of m/n at
//!   infinity (Darlington, "Synthesis of reactance 4-poles", J. Math. Phys. 18, 1939; the method
//!   is textbook common practice): it is y22 of the ideal-source ladder (counted from the load)
//!   and z11 of the open-load ladder (counted from the source).
//! - **Doubly terminated Bessel** (Darlington synthesis, as references.md §2.3 did to make its
//!   tables): ρ(s)ρ(−s) = 1 − |S21|² gives N(s)N(−s) = D(s)D(−s) − |S21(0)|²·D(0)², whose roots
//!   come from an Aberth–Ehrlich iteration (Aberth, Math. Comp. 27, 1973; Ehrlich, Comm. ACM 10,
//!   1967) and polished by Newton steps on P. With the reflection zeros N chosen in the left half-plane,
//!   Z_in = (D + N)/(D − N) is expanded at infinity into the ladder. Equal terminations put one
//!   reflection zero exactly at s = 0, which is divided out before the roots are sought.
//!   The polishing, N and the expansion run in double-double arithmetic (Dekker, Numer. Math. 18,
//!   1971): the expansion is a polynomial Euclidean algorithm that loses about 9 digits by order
//!   8 in plain f64, although the values are well conditioned (perturbing the polynomial's
//!   coefficients by 1e-16 moves them by about 1e-15, checked with mpmath).
//!   The Bessel polynomial is computed in the phase normalisation (product of pole magnitudes 1,
//!   as scipy's `besselap(norm='phase')`) and the elements are then scaled: ×1/b0^(1/n) for the
//!   delay normalisation and ×ω3dB for the −3 dB one. Layout: with equal terminations the
//!   [`BesselNormalization::Delay`] ladder lists the large element first, as references.md
//!   §2.3(b) (the MYJ "maximally flat time delay" layout), and [`BesselNormalization::Magnitude`]
//!   and [`BesselNormalization::Phase`] list the small element first, as §2.3(a) (Zverev, RF Cafe
//!   and Winder); with unequal terminations (r the series-first ratio) the reflection zeros are taken in the left
//!   half-plane for r ≥ 1 and in the right half-plane for r < 1 (odd n); for even n and r < 1
//!   only the real zero nearest the origin is mirrored into the right half-plane.
//! - **Denormalisation** (references.md §2): series L = g·R0/ωc, shunt C = g/(R0·ωc); highpass
//!   series C = 1/(g·R0·ωc), shunt L = R0/(g·ωc). Bandpass and bandstop use the standard element
//!   transformations (common practice) with ω0 = √(ωl·ωh) and B = ωh − ωl: bandpass s → (s² + ω0²)/(B·s)
//!   makes a series L into a series LC (L = g·R0/B, C = B/(g·R0·ω0²)) and a shunt C into a shunt
//!   tank (C = g/(R0·B), L = R0·B/(g·ω0²)); bandstop s → B·s/(s² + ω0²) makes a series L into a
//!   series tank (L = g·R0·B/ω0², C = 1/(g·R0·B)) and a shunt C into a shunt series LC
//!   (L = R0/(g·B), C = g·B/(R0·ω0²)).

use crate::design::{Design, Load, Part, Source, FORMAT, VERSION};
use crate::synthesis::{positive, Alignment, Band, BesselNormalization, ResponseType, SynthesisError};
use num_complex::Complex64;
use std::f64::consts::PI;

/// The highest order synthesized.
pub const MAX_ORDER: usize = 8;

/// How a ladder is terminated.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Termination {
    /// Doubly terminated with R_load = R_source. Even-order Chebyshev cannot have equal
    /// terminations; it gets its natural load ratio g(n+1) = coth²(β/4) instead, which
    /// [`Prototype::load_resistance`] and the design's note report.
    Equal,
    /// Doubly terminated with R_load / R_source = the ratio (> 0). `Ratio(1.0)` is the same as
    /// [`Termination::Equal`], except for even-order Chebyshev, where it is an error: an exact
    /// ratio was asked for and cannot be met.
    Ratio(f64),
    /// Singly terminated: an ideal (zero-impedance) voltage source and a resistive load R0.
    IdealSource,
    /// Singly terminated: a source of resistance R0 and an open (infinite-impedance) load.
    OpenLoad,
}

/// Which kind of element sits next to the source.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FirstElement {
    /// A series element (an inductor in the lowpass ladder).
    Series,
    /// A shunt element (a capacitor in the lowpass ladder).
    Shunt,
}

/// A normalised low-pass ladder prototype: source 1 Ω (0 Ω for an ideal source), cutoff 1 rad/s.
#[derive(Debug, Clone, PartialEq)]
pub struct Prototype {
    /// g1..gn counted from the source: henries for series positions, farads for shunt ones.
    pub g: Vec<f64>,
    /// g(n+1): the load as a resistance when gn is a shunt element and as a conductance when it is
    /// a series element (references.md §2 conventions); 1 for an ideal source, and
    /// `f64::INFINITY` (an infinite resistance) for an open load.
    pub load: f64,
    /// The termination asked for.
    pub termination: Termination,
    /// The element next to the source, for which `g` and `load` hold.
    pub first: FirstElement,
}

/// What to build from a prototype.
#[derive(Debug, Clone, PartialEq)]
pub struct LadderOptions {
    /// The response type; bandpass and bandstop use the element transformations.
    pub response: ResponseType,
    /// [`Band::Cutoff`] for lowpass and highpass; two edges for bandpass and bandstop.
    pub band: Band,
    /// R0 in Ω: the source resistance (and the load for [`Termination::Equal`]); the load
    /// resistance for [`Termination::IdealSource`].
    pub source_resistance: f64,
    /// The element next to the source.
    pub first: FirstElement,
    /// The design's name; empty gives a name made from the request.
    pub name: String,
}

/// The normalised prototype of `alignment` in the usual form: a series element first, except for
/// an open load with an odd order, which needs a shunt element first.
///
/// For [`Termination::Ratio`] the values hold for the series-first form; the shunt-first form of
/// the same ratio has other values (see [`prototype_values_for`]).
///
/// # Errors
/// [`SynthesisError::BadOrder`] outside 1..=8, [`SynthesisError::BadRipple`],
/// [`SynthesisError::BadValue`] for a ratio that is not finite and positive,
/// [`SynthesisError::Terminations`] for a termination the alignment cannot have (the reason names
/// what is possible), [`SynthesisError::Unsupported`] for f0/Q (an RLC section instead).
pub fn prototype_values(
    alignment: Alignment,
    order: usize,
    termination: Termination,
) -> Result<Prototype, SynthesisError> {
    let first = match termination {
        Termination::OpenLoad if order % 2 == 1 => FirstElement::Shunt,
        _ => FirstElement::Series,
    };
    prototype_values_for(alignment, order, termination, first)
}

/// The normalised prototype of `alignment` for a ladder whose element next to the source is `first`.
///
/// A shunt-first ladder with R_load/R_source = r is the dual of the series-first ladder with
/// ratio 1/r, so the values for [`Termination::Ratio`] depend on `first`; for the other
/// terminations they do not (or `first` is fixed by the termination).
///
/// # Errors
/// As [`prototype_values`], and [`SynthesisError::Terminations`] when `first` cannot be used with
/// the termination: a shunt element across an ideal source, a series element next to an open
/// load, or an even order that would have to step the resistance the wrong way.
pub fn prototype_values_for(
    alignment: Alignment,
    order: usize,
    termination: Termination,
    first: FirstElement,
) -> Result<Prototype, SynthesisError> {
    if !(1..=MAX_ORDER).contains(&order) {
        return Err(SynthesisError::BadOrder {
            order,
            min: 1,
            max: MAX_ORDER,
            why: "a ladder needs at least one element, and this synthesis is verified up to order 8",
        });
    }
    let family = Family::of(alignment, order)?;
    if let Termination::Ratio(ratio) = termination {
        if !(ratio.is_finite() && ratio > 0.0) {
            return Err(SynthesisError::BadValue { what: "load-to-source resistance ratio", value: ratio });
        }
    }
    let n = order;
    let asked = describe_request(alignment, n, termination, first);
    let refuse = |reason: String| SynthesisError::Terminations { asked: asked.clone(), reason };
    let numerical = |detail: String| SynthesisError::NumericalFailure { asked: asked.clone(), detail };
    let (g, load) = match termination {
        Termination::IdealSource => {
            if first == FirstElement::Shunt {
                return Err(refuse(
                    "a shunt element across an ideal (zero-impedance) source does nothing; start with a series element"
                        .to_string(),
                ));
            }
            let mut g = family.singly_terminated().map_err(numerical)?;
            g.reverse();
            (g, 1.0)
        }
        Termination::OpenLoad => {
            let needed = if n % 2 == 0 { FirstElement::Series } else { FirstElement::Shunt };
            if first != needed {
                return Err(refuse(format!(
                    "with an open load the element next to the output must be a shunt element, so order {n} needs a {} element first",
                    form_name(needed)
                )));
            }
            (family.singly_terminated().map_err(numerical)?, f64::INFINITY)
        }
        Termination::Equal => family.doubly_terminated(None).map_err(|e| e.into_error(&refuse, &numerical))?,
        Termination::Ratio(ratio) => {
            // The series-first ratio: a shunt-first ladder is the dual of a series-first one.
            let series_ratio = if first == FirstElement::Series { ratio } else { 1.0 / ratio };
            if n % 2 == 0 {
                // Even orders: a series-first Butterworth or Chebyshev ladder steps the resistance
                // up by at least `bound`.
                let bound = match family {
                    Family::Chebyshev { ripple_db, .. } => chebyshev_natural_ratio(ripple_db),
                    Family::Butterworth { .. } => 1.0,
                    // Bessel reflection zeros include real ones down to this ratio.
                    Family::Bessel { n, .. } => bessel_step_down_limit(n),
                    Family::LinkwitzRiley { .. } | Family::Critical { .. } => {
                        step_down_limit(&family.all_pole_polynomial().expect("an all-pole family").0)
                    }
                };
                if series_ratio < bound * (1.0 - 1e-9) {
                    return Err(refuse(even_order_reason(family, first, ratio, bound)));
                }
            }
            let requested = if series_ratio == 1.0 { None } else { Some(series_ratio) };
            family.doubly_terminated(requested).map_err(|e| e.into_error(&refuse, &numerical))?
        }
    };
    Ok(Prototype { g, load, termination, first })
}

/// Synthesizes an LC ladder of `alignment` and `order` between the terminations, scaled to
/// `options`' resistance and band.
///
/// The design has the source on node `in`, the ladder nodes `n2`, `n3`, …, the last node `out`
/// (the output, and the load unless the load is open), and references numbered by position (C1,
/// L2, … in a lowpass; a bandpass or bandstop position holds both an L and a C, joined through
/// node `m<k>` where they are in series). A one-element shunt ladder has a single node, `in`. The
/// note states the alignment, order, terminations, normalisation and prototype values.
///
/// # Errors
/// As [`prototype_values_for`]; [`SynthesisError::BadValue`] for a source resistance that is not
/// finite and positive; [`SynthesisError::BadFrequency`] or [`SynthesisError::BadBand`] for an
/// unusable band; [`SynthesisError::Unsupported`] for a lowpass or highpass given two edges.
pub fn synthesize_ladder(
    alignment: Alignment,
    order: usize,
    termination: Termination,
    options: &LadderOptions,
) -> Result<Design, SynthesisError> {
    let r0 = options.source_resistance;
    if !(r0.is_finite() && r0 > 0.0) {
        let what = match termination {
            Termination::IdealSource => "reference resistance (the load of an ideal-source ladder)",
            _ => "source resistance",
        };
        return Err(SynthesisError::BadValue { what, value: r0 });
    }
    let map = FrequencyMap::new(options.response, options.band)?;
    let prototype = prototype_values_for(alignment, order, termination, options.first)?;
    let parts = ladder_parts(&prototype, &map, r0);
    let n_series = (1..=order).filter(|&k| !prototype.is_shunt(k)).count();
    let output = if n_series == 0 { "in" } else { "out" };
    let load = match termination {
        Termination::OpenLoad => None,
        _ => Some(Load {
            node: output.to_string(),
            resistance: Some(r0 * prototype.load_resistance()),
            capacitance: None,
        }),
    };
    let name = if options.name.is_empty() {
        format!("{}-{}-{}", alignment.name().replace(' ', "-"), options.response.name(), order)
    } else {
        options.name.clone()
    };
    Ok(Design {
        format: FORMAT.to_string(),
        version: VERSION,
        name,
        note: design_note(alignment, &prototype, options, r0),
        source: Source { node: "in".to_string(), resistance: r0 * prototype.source_resistance(), amplitude: 1.0 },
        load,
        output: output.to_string(),
        elements: parts,
        tolerances: Default::default(),
    })
}

impl Prototype {
    /// The order n.
    pub fn order(&self) -> usize {
        self.g.len()
    }

    /// Whether position `k` (1-based, from the source) is a shunt element.
    pub fn is_shunt(&self, k: usize) -> bool {
        (self.first == FirstElement::Shunt) == (k % 2 == 1)
    }

    /// The normalised source resistance: 1, or 0 for an ideal source.
    pub fn source_resistance(&self) -> f64 {
        match self.termination {
            Termination::IdealSource => 0.0,
            _ => 1.0,
        }
    }

    /// The normalised load resistance R_load/R0: g(n+1) or its reciprocal (by the position of gn),
    /// 1 for an ideal source and infinity for an open load.
    pub fn load_resistance(&self) -> f64 {
        match self.termination {
            Termination::IdealSource => 1.0,
            Termination::OpenLoad => f64::INFINITY,
            Termination::Equal | Termination::Ratio(_) => {
                if self.is_shunt(self.order()) {
                    self.load
                } else {
                    1.0 / self.load
                }
            }
        }
    }
}

/// The alignments a ladder can be made for, with their validated parameters.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Family {
    Butterworth {
        n: usize,
    },
    Chebyshev {
        n: usize,
        ripple_db: f64,
    },
    Bessel {
        n: usize,
        normalization: BesselNormalization,
    },
    /// The Butterworth polynomial of order n/2, squared (n even).
    LinkwitzRiley {
        n: usize,
    },
    /// (1 + s)^n, scaled to −3 dB at ω = 1.
    Critical {
        n: usize,
    },
}

/// Why a doubly terminated prototype could not be made.
enum DoublyError {
    /// The termination is impossible; the text says what is possible.
    Refused(String),
    /// The numerical route failed (a fault, not a user error).
    Numerical(String),
}

/// Where a prototype's cutoff goes.
#[derive(Debug, Clone, Copy, PartialEq)]
enum FrequencyMap {
    Low { omega_c: f64 },
    High { omega_c: f64 },
    Pass { omega_0: f64, bandwidth: f64 },
    Stop { omega_0: f64, bandwidth: f64 },
}

impl Family {
    fn of(alignment: Alignment, n: usize) -> Result<Self, SynthesisError> {
        match alignment {
            Alignment::Butterworth => Ok(Family::Butterworth { n }),
            Alignment::Chebyshev { ripple_db } => {
                if !(ripple_db.is_finite() && ripple_db > 0.0 && ripple_db <= 10.0) {
                    return Err(SynthesisError::BadRipple { ripple_db });
                }
                Ok(Family::Chebyshev { n, ripple_db })
            }
            Alignment::Bessel { normalization } => Ok(Family::Bessel { n, normalization }),
            Alignment::LinkwitzRiley if n % 2 == 1 => Err(SynthesisError::BadOrder {
                order: n,
                min: 2,
                max: crate::prototype::MAX_ORDER,
                why: "Linkwitz-Riley needs an even order",
            }),
            Alignment::LinkwitzRiley => Ok(Family::LinkwitzRiley { n }),
            Alignment::Critical => Ok(Family::Critical { n }),
            Alignment::Quality { q } => Err(SynthesisError::Unsupported {
                asked: format!("an LC ladder for a single f0/Q section (Q = {q})"),
                instead: "use --topology rlc for a single section".to_string(),
            }),
        }
    }

    /// Singly terminated values counted from the resistive termination.
    fn singly_terminated(self) -> Result<Vec<f64>, String> {
        match self {
            Family::Butterworth { n } => Ok(butterworth_singly(n)),
            Family::Chebyshev { n, ripple_db } => {
                let denominator = real_polynomial(&chebyshev_poles(n, ripple_db), 1.0);
                cauer_even_odd(&denominator)
            }
            Family::Bessel { .. } | Family::LinkwitzRiley { .. } | Family::Critical { .. } => {
                let (denominator, scale) = self.all_pole_polynomial().expect("an all-pole family");
                Ok(cauer_even_odd(&denominator)?.into_iter().map(|g| g * scale).collect())
            }
        }
    }

    /// The denominator D(s) (ascending, D(0) = 1) of the families synthesized from their
    /// polynomial (Darlington or continued fraction), and the factor that scales the ladder
    /// values to the family's cutoff normalisation.
    fn all_pole_polynomial(self) -> Option<(Vec<f64>, f64)> {
        match self {
            Family::Bessel { n, normalization } => Some(bessel_phase_polynomial(n, normalization)),
            // LR: B_{n/2}(s)², −6.02 dB at ω = 1 with no rescaling (prototype.rs).
            Family::LinkwitzRiley { n } => {
                let half = crate::prototype::lowpass_prototype(Alignment::Butterworth, n / 2).ok()?;
                let doubled: Vec<Complex64> = half.poles.iter().flat_map(|&p| [p, p]).collect();
                Some((real_polynomial(&doubled, 1.0), 1.0))
            }
            // (1 + s)^n, whose −3 dB point sits at √(2^{1/n} − 1) = 1/critical_pole(n).
            Family::Critical { n } => Some((
                real_polynomial(&vec![Complex64::new(-1.0, 0.0); n], 1.0),
                1.0 / crate::prototype::critical_pole(n),
            )),
            Family::Butterworth { .. } | Family::Chebyshev { .. } => None,
        }
    }

    /// Doubly terminated values for the series-first form; `series_ratio` None means equal
    /// terminations (the natural ratio for even-order Chebyshev). Returns (g, g(n+1)).
    fn doubly_terminated(self, series_ratio: Option<f64>) -> Result<(Vec<f64>, f64), DoublyError> {
        match self {
            Family::Butterworth { n } => Ok(butterworth_doubly(n, series_ratio.unwrap_or(1.0))),
            Family::Chebyshev { n, ripple_db } => chebyshev_doubly(n, ripple_db, series_ratio),
            Family::Bessel { n, .. } | Family::LinkwitzRiley { n } | Family::Critical { n } => {
                let (denominator, scale) = self.all_pole_polynomial().expect("an all-pole family");
                let ratio = series_ratio.unwrap_or(1.0);
                let zeros = match (ratio >= 1.0, n % 2) {
                    (true, _) => ZeroChoice::Left,
                    (false, 1) => ZeroChoice::Right,
                    // An even order steps the resistance down with a series element first only
                    // if ρ(0) < 0, which needs one real reflection zero in the right half-plane.
                    (false, _) => ZeroChoice::LeftButSmallestReal,
                };
                let (mut g, load) = darlington(&denominator, ratio, zeros).map_err(DoublyError::Numerical)?;
                // Bessel equal-termination values are listed source-side first as in the tables.
                let bessel_table_orientation = matches!(self, Family::Bessel { normalization, .. }
                    if normalization != BesselNormalization::Delay);
                if series_ratio.is_none() && bessel_table_orientation {
                    g.reverse();
                }
                Ok((g.into_iter().map(|x| x * scale).collect(), load))
            }
        }
    }
}

impl DoublyError {
    fn into_error(
        self,
        refuse: &dyn Fn(String) -> SynthesisError,
        numerical: &dyn Fn(String) -> SynthesisError,
    ) -> SynthesisError {
        match self {
            DoublyError::Refused(reason) => refuse(reason),
            DoublyError::Numerical(detail) => numerical(detail),
        }
    }
}

impl FrequencyMap {
    fn new(response: ResponseType, band: Band) -> Result<Self, SynthesisError> {
        let two_pi = 2.0 * PI;
        match response {
            ResponseType::LowPass | ResponseType::HighPass => {
                let Band::Cutoff(f_hz) = band else {
                    return Err(SynthesisError::Unsupported {
                        asked: format!("a {} ladder with two band edges", response.name()),
                        instead: "give one cutoff frequency for a lowpass or highpass ladder".to_string(),
                    });
                };
                let omega_c = two_pi * positive("cutoff", f_hz)?;
                Ok(if response == ResponseType::LowPass {
                    FrequencyMap::Low { omega_c }
                } else {
                    FrequencyMap::High { omega_c }
                })
            }
            ResponseType::BandPass | ResponseType::BandStop => {
                if let Band::Cutoff(f_hz) = band {
                    return Err(SynthesisError::Unsupported {
                        asked: format!("a {} ladder from a single cutoff ({f_hz} Hz)", response.name()),
                        instead: "give the two band edges (low and high), or the centre frequency and bandwidth"
                            .to_string(),
                    });
                }
                let (low_hz, high_hz) = band.edges()?;
                let omega_0 = two_pi * (low_hz * high_hz).sqrt();
                let bandwidth = two_pi * (high_hz - low_hz);
                if !(omega_0.is_finite() && bandwidth.is_finite() && bandwidth > 0.0) {
                    return Err(SynthesisError::BadBand { low_hz, high_hz });
                }
                Ok(if response == ResponseType::BandPass {
                    FrequencyMap::Pass { omega_0, bandwidth }
                } else {
                    FrequencyMap::Stop { omega_0, bandwidth }
                })
            }
        }
    }
}

/// Where the reflection zeros are taken.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum ZeroChoice {
    /// All in the left half-plane (minimum phase).
    Left,
    /// All in the right half-plane.
    Right,
    /// All in the left half-plane except the real zero nearest the origin, which is mirrored.
    LeftButSmallestReal,
}

fn form_name(first: FirstElement) -> &'static str {
    match first {
        FirstElement::Series => "series",
        FirstElement::Shunt => "shunt",
    }
}

/// Why an even-order ladder cannot have this ratio, and which ratios it can have.
fn even_order_reason(family: Family, first: FirstElement, ratio: f64, bound: f64) -> String {
    let number = |x: f64| if x == 1.0 { "1".to_string() } else { format!("{x:.6}") };
    let (up, down) = (number(bound), number(1.0 / bound));
    let reason = match first {
        FirstElement::Series => format!(
            "with a series element first an even-order ladder needs R_load/R_source ≥ {up} (here {ratio}); with a shunt element first it takes ratios ≤ {down}"
        ),
        FirstElement::Shunt => format!(
            "with a shunt element first an even-order ladder needs R_load/R_source ≤ {down} (here {ratio}); with a series element first it takes ratios ≥ {up}"
        ),
    };
    let why = match family {
        Family::Butterworth { .. } => {
            "its reflection zeros have no real member, so a series element first can only step the resistance up"
        }
        Family::Chebyshev { .. } => {
            "the limit is the natural ratio coth²(β/4) set by the passband ripple, which equal terminations select automatically"
        }
        Family::Bessel { .. } | Family::LinkwitzRiley { .. } | Family::Critical { .. } => {
            "beyond that limit the reflection zeros have no real member to place in the right half-plane"
        }
    };
    format!("{reason}; {why}")
}

fn alignment_label(alignment: Alignment) -> String {
    match alignment {
        Alignment::Butterworth => "Butterworth".to_string(),
        Alignment::Chebyshev { ripple_db } => format!("Chebyshev {ripple_db} dB"),
        Alignment::Bessel { normalization } => format!("Bessel ({})", bessel_normalization_text(normalization)),
        Alignment::LinkwitzRiley => "Linkwitz-Riley".to_string(),
        Alignment::Critical => "critically damped".to_string(),
        Alignment::Quality { q } => format!("second-order Q = {q}"),
    }
}

fn bessel_normalization_text(normalization: BesselNormalization) -> &'static str {
    match normalization {
        BesselNormalization::Magnitude => "−3 dB at the cutoff",
        BesselNormalization::Delay => "DC group delay 1/ωc",
        BesselNormalization::Phase => "phase-matched: pole magnitudes multiply to ωc^n",
    }
}

fn termination_text(termination: Termination) -> String {
    match termination {
        Termination::Equal => "equal terminations".to_string(),
        Termination::Ratio(ratio) => format!("R_load/R_source = {ratio}"),
        Termination::IdealSource => "an ideal source and a resistive load".to_string(),
        Termination::OpenLoad => "a resistive source and an open load".to_string(),
    }
}

fn describe_request(alignment: Alignment, n: usize, termination: Termination, first: FirstElement) -> String {
    format!(
        "a {} ladder of order {n} with {} and a {} element first",
        alignment_label(alignment),
        termination_text(termination),
        form_name(first)
    )
}

fn design_note(alignment: Alignment, prototype: &Prototype, options: &LadderOptions, r0: f64) -> String {
    let n = prototype.order();
    let band = match (options.band, options.band.edges()) {
        (Band::Cutoff(f_hz), _) => format!("{}, cutoff {f_hz} Hz", options.response.name()),
        (_, Ok((low_hz, high_hz))) => format!("{}, edges {low_hz} Hz and {high_hz} Hz", options.response.name()),
        (_, Err(_)) => options.response.name().to_string(),
    };
    let normalisation = match alignment {
        Alignment::Butterworth => "; the cutoff is the −3.01 dB point".to_string(),
        Alignment::Chebyshev { ripple_db } => format!("; the cutoff is the ripple edge, −{ripple_db} dB"),
        Alignment::LinkwitzRiley => "; the cutoff is the −6.02 dB point".to_string(),
        Alignment::Critical => "; the cutoff is the −3.01 dB point (coincident real poles)".to_string(),
        _ => String::new(),
    };
    let terminations = match prototype.termination {
        Termination::IdealSource => format!("ideal source, load {r0} Ω; the response is V_load/E"),
        Termination::OpenLoad => format!("source {r0} Ω, open load; the response is V_out/E"),
        Termination::Equal | Termination::Ratio(_) => {
            let load = r0 * prototype.load_resistance();
            let natural = if prototype.termination == Termination::Equal && prototype.load_resistance() != 1.0 {
                format!(
                    " (even-order Chebyshev cannot have equal terminations; the natural R_load/R_source = {:.6} is used)",
                    prototype.load_resistance()
                )
            } else {
                String::new()
            };
            format!("source {r0} Ω, load {load} Ω{natural}")
        }
    };
    let values: Vec<String> = prototype.g.iter().map(|g| format!("{g:.6}")).collect();
    format!(
        "{} LC ladder, order {n}, {band}{normalisation}; {terminations}; {} element first; prototype g = [{}], g(n+1) = {}",
        alignment_label(alignment),
        form_name(prototype.first),
        values.join(", "),
        if prototype.load.is_finite() { format!("{:.6}", prototype.load) } else { "∞ (open)".to_string() }
    )
}

fn inductor(reference: String, a: &str, b: &str, value: f64) -> Part {
    Part::Inductor { reference, value, nodes: [a.to_string(), b.to_string()], series_resistance: None }
}

fn capacitor(reference: String, a: &str, b: &str, value: f64) -> Part {
    Part::Capacitor { reference, value, nodes: [a.to_string(), b.to_string()], series_resistance: None }
}

/// The denormalised parts, position by position.
fn ladder_parts(prototype: &Prototype, map: &FrequencyMap, r0: f64) -> Vec<Part> {
    let n = prototype.order();
    let n_series = (1..=n).filter(|&k| !prototype.is_shunt(k)).count();
    let mut parts = Vec::new();
    let mut node = "in".to_string();
    let mut main_nodes = 1;
    for (index, &g) in prototype.g.iter().enumerate() {
        let k = index + 1;
        let (l_ref, c_ref, mid) = (format!("L{k}"), format!("C{k}"), format!("m{k}"));
        if prototype.is_shunt(k) {
            let a = node.as_str();
            match *map {
                FrequencyMap::Low { omega_c } => parts.push(capacitor(c_ref, a, "0", g / (r0 * omega_c))),
                FrequencyMap::High { omega_c } => parts.push(inductor(l_ref, a, "0", r0 / (g * omega_c))),
                FrequencyMap::Pass { omega_0, bandwidth } => {
                    parts.push(inductor(l_ref, a, "0", r0 * bandwidth / (g * omega_0 * omega_0)));
                    parts.push(capacitor(c_ref, a, "0", g / (r0 * bandwidth)));
                }
                FrequencyMap::Stop { omega_0, bandwidth } => {
                    parts.push(inductor(l_ref, a, &mid, r0 / (g * bandwidth)));
                    parts.push(capacitor(c_ref, &mid, "0", g * bandwidth / (r0 * omega_0 * omega_0)));
                }
            }
        } else {
            main_nodes += 1;
            let next = if main_nodes == n_series + 1 { "out".to_string() } else { format!("n{main_nodes}") };
            let (a, b) = (node.as_str(), next.as_str());
            match *map {
                FrequencyMap::Low { omega_c } => parts.push(inductor(l_ref, a, b, g * r0 / omega_c)),
                FrequencyMap::High { omega_c } => parts.push(capacitor(c_ref, a, b, 1.0 / (g * r0 * omega_c))),
                FrequencyMap::Pass { omega_0, bandwidth } => {
                    parts.push(inductor(l_ref, a, &mid, g * r0 / bandwidth));
                    parts.push(capacitor(c_ref, &mid, b, bandwidth / (g * r0 * omega_0 * omega_0)));
                }
                FrequencyMap::Stop { omega_0, bandwidth } => {
                    parts.push(inductor(l_ref, a, b, g * r0 * bandwidth / (omega_0 * omega_0)));
                    parts.push(capacitor(c_ref, a, b, 1.0 / (g * r0 * bandwidth)));
                }
            }
            node = next;
        }
    }
    parts
}

/// a_k = sin((2k−1)π/2n).
fn a_coefficient(k: usize, n: usize) -> f64 {
    ((2 * k - 1) as f64 * PI / (2 * n) as f64).sin()
}

/// Butterworth, doubly terminated, series-first ratio r (closed forms in the module doc).
fn butterworth_doubly(n: usize, ratio: f64) -> (Vec<f64>, f64) {
    let load = if n % 2 == 0 { ratio } else { 1.0 / ratio };
    if ratio == 1.0 {
        return ((1..=n).map(|k| 2.0 * a_coefficient(k, n)).collect(), 1.0);
    }
    let alpha = ((ratio - 1.0).abs() / (ratio + 1.0)).powf(1.0 / n as f64);
    let y = if ratio >= 1.0 { alpha } else { -alpha };
    let mut g = vec![2.0 * a_coefficient(1, n) / (1.0 - y)];
    for k in 1..n {
        let denominator = 1.0 - 2.0 * y * (k as f64 * PI / n as f64).cos() + y * y;
        let next = 4.0 * a_coefficient(k, n) * a_coefficient(k + 1, n) / (denominator * g[k - 1]);
        g.push(next);
    }
    (g, load)
}

/// Butterworth, singly terminated, counted from the resistive termination.
fn butterworth_singly(n: usize) -> Vec<f64> {
    let c = |k: usize| (k as f64 * PI / (2 * n) as f64).cos().powi(2);
    let mut g = vec![a_coefficient(1, n)];
    for k in 2..=n {
        let next = a_coefficient(k - 1, n) * a_coefficient(k, n) / (c(k - 1) * g[k - 2]);
        g.push(next);
    }
    g
}

/// ε for a ripple in dB.
fn chebyshev_epsilon(ripple_db: f64) -> f64 {
    (10f64.powf(ripple_db / 10.0) - 1.0).sqrt()
}

/// The even-order Chebyshev load g(n+1) = coth²(β/4), β = ln coth(L_r/17.3718) (MYJ).
fn chebyshev_natural_ratio(ripple_db: f64) -> f64 {
    let beta = (1.0 / (ripple_db * 10f64.ln() / 40.0).tanh()).ln();
    (1.0 / (beta / 4.0).tanh()).powi(2)
}

/// Chebyshev, doubly terminated, series-first; `series_ratio` None = equal (natural for even n).
fn chebyshev_doubly(n: usize, ripple_db: f64, series_ratio: Option<f64>) -> Result<(Vec<f64>, f64), DoublyError> {
    let epsilon = chebyshev_epsilon(ripple_db);
    // MYJ: β = ln coth(L_r / 17.3718), 17.3718 = 40/ln 10.
    let beta = (1.0 / (ripple_db * 10f64.ln() / 40.0).tanh()).ln();
    let gamma = (beta / (2 * n) as f64).sinh();
    let natural = chebyshev_natural_ratio(ripple_db);
    let even = n % 2 == 0;
    let (ratio, y) = match series_ratio {
        None => (if even { natural } else { 1.0 }, 0.0),
        Some(ratio) => {
            // 1 − K = ((r − 1)² − 4r·ε²·T_n(0)²)/(r + 1)², written to avoid cancellation.
            let t0_squared = if even { 1.0 } else { 0.0 };
            let numerator = (ratio - 1.0).powi(2) - 4.0 * ratio * epsilon * epsilon * t0_squared;
            // The caller has refused ratios below the natural one; this guards the formula.
            if numerator < -1e-6 * (ratio + 1.0).powi(2) {
                return Err(DoublyError::Refused(format!(
                    "the passband ripple of an even-order Chebyshev ladder needs R_load/R_source ≥ {natural:.6} with a series element first or ≤ {:.6} with a shunt element first (the natural ratio coth²(β/4) and its inverse); use equal terminations to get the natural ratio",
                    1.0 / natural
                )));
            }
            let delta = numerator.max(0.0).sqrt() / ((ratio + 1.0) * epsilon);
            let y = ((delta).asinh() / n as f64).sinh();
            (ratio, if ratio >= 1.0 { y } else { -y })
        }
    };
    let x = gamma;
    let mut g = vec![2.0 * a_coefficient(1, n) / (x - y)];
    for k in 1..n {
        let angle = k as f64 * PI / n as f64;
        let denominator = x * x + y * y + angle.sin().powi(2) - 2.0 * x * y * angle.cos();
        let next = 4.0 * a_coefficient(k, n) * a_coefficient(k + 1, n) / (denominator * g[k - 1]);
        g.push(next);
    }
    let load = if even { ratio } else { 1.0 / ratio };
    Ok((g, load))
}

/// The Chebyshev type I poles (ripple-edge normalised): −sinh a·sin θ_k + j·cosh a·cos θ_k with
/// a = asinh(1/ε)/n and θ_k = (2k−1)π/2n.
fn chebyshev_poles(n: usize, ripple_db: f64) -> Vec<Complex64> {
    let a = (1.0 / chebyshev_epsilon(ripple_db)).asinh() / n as f64;
    (1..=n)
        .map(|k| {
            let theta = (2 * k - 1) as f64 * PI / (2 * n) as f64;
            Complex64::new(-a.sinh() * theta.sin(), a.cosh() * theta.cos())
        })
        .collect()
}

/// The reverse Bessel polynomial in the phase normalisation (monic, constant term 1), ascending,
/// and the factor that scales its ladder values to `normalization`.
fn bessel_phase_polynomial(n: usize, normalization: BesselNormalization) -> (Vec<f64>, f64) {
    let delay = bessel_delay_polynomial(n);
    let b0 = delay[0];
    let c = b0.powf(1.0 / n as f64);
    let phase: Vec<f64> = delay.iter().enumerate().map(|(k, &b)| b * c.powi(k as i32) / b0).collect();
    let scale = match normalization {
        BesselNormalization::Phase => 1.0,
        // H_phase(s) = H_delay(c·s), so each element is c times its delay-normalised value.
        BesselNormalization::Delay => 1.0 / c,
        BesselNormalization::Magnitude => half_power_frequency(&phase),
    };
    (phase, scale)
}

/// The lowest R_load/R_source of a series-first even-order Bessel ladder (below 1).
///
/// R_load < R_source needs ρ(0) < 0, so one real reflection zero must be mirrored into the right
/// half-plane; P(u) = Q(u) + D(0)²·(1 − t) has a real positive root u = s² exactly when
/// 1 − t ≤ −min Q(u)/D(0)² over u > 0, with Q(u) = D(s)D(−s) − D(0)². With
/// ((1 − r)/(1 + r))² = 1 − t that gives r ≥ (1 − √m)/(1 + √m), m = −min Q/D(0)².
fn bessel_step_down_limit(n: usize) -> f64 {
    step_down_limit(&bessel_phase_polynomial(n, BesselNormalization::Phase).0)
}

/// The lowest R_load/R_source of a series-first even-order ladder realising 1/D(s) by the
/// Darlington route (see [`bessel_step_down_limit`] for the derivation); D ascending.
fn step_down_limit(d: &[f64]) -> f64 {
    let n = d.len() - 1;
    // Q(u) in u = s², ascending; Q(0) = 0.
    let q: Vec<f64> = (0..=n)
        .map(|k| {
            if k == 0 {
                return 0.0;
            }
            (0..=n)
                .filter(|&i| 2 * k >= i && 2 * k - i <= n)
                .map(|i| d[i] * d[2 * k - i] * if (2 * k - i) % 2 == 0 { 1.0 } else { -1.0 })
                .sum()
        })
        .collect();
    let slope: Vec<f64> = q.iter().enumerate().skip(1).map(|(k, &c)| k as f64 * c).collect();
    let value = |u: f64| q.iter().rev().fold(0.0, |acc, &c| acc * u + c);
    let lowest = polynomial_roots(&slope)
        .unwrap_or_default()
        .into_iter()
        .filter(|u| u.im.abs() <= 1e-9 * u.norm() && u.re > 0.0)
        .map(|u| value(u.re))
        .fold(0.0f64, f64::min);
    let m = (-lowest / (d[0] * d[0])).clamp(0.0, 1.0);
    (1.0 - m.sqrt()) / (1.0 + m.sqrt())
}

/// b_k = (2n − k)! / (2^(n−k)·k!·(n − k)!), ascending (exact in f64 for n ≤ 8).
fn bessel_delay_polynomial(n: usize) -> Vec<f64> {
    let factorial = |m: usize| (1..=m).map(|i| i as f64).product::<f64>();
    (0..=n).map(|k| factorial(2 * n - k) / (2f64.powi((n - k) as i32) * factorial(k) * factorial(n - k))).collect()
}

/// The ω where |D(0)/D(jω)|² = 1/2, by bisection (|D(jω)| grows monotonically for these
/// polynomials).
fn half_power_frequency(polynomial: &[f64]) -> f64 {
    let dc = polynomial[0] * polynomial[0];
    let excess = |omega: f64| evaluate(polynomial, Complex64::new(0.0, omega)).norm_sqr() - 2.0 * dc;
    let (mut low, mut high) = (0.0, 1.0);
    while excess(high) < 0.0 {
        high *= 2.0;
    }
    for _ in 0..200 {
        let middle = 0.5 * (low + high);
        if middle <= low || middle >= high {
            break;
        }
        if excess(middle) < 0.0 {
            low = middle;
        } else {
            high = middle;
        }
    }
    0.5 * (low + high)
}

/// Cauer expansion at infinity of m/n (even over odd part) of `denominator`: the singly
/// terminated ladder counted from the resistive termination.
fn cauer_even_odd(denominator: &[f64]) -> Result<Vec<f64>, String> {
    let n = denominator.len() - 1;
    let part = |parity: usize| -> Vec<Wide> {
        denominator.iter().enumerate().map(|(k, &d)| Wide::from(if k % 2 == parity { d } else { 0.0 })).collect()
    };
    let (numerator, rest) = if n % 2 == 0 { (part(0), part(1)) } else { (part(1), part(0)) };
    let (g, remainder) = cauer_at_infinity(numerator, rest[..n].to_vec(), n)?;
    // The far end is a short (ideal source) or an open (open load): the remainder vanishes.
    if remainder.is_finite() && remainder.abs() < 1e12 {
        return Err(format!("the expansion did not end in a short or open circuit (remainder {remainder})"));
    }
    Ok(g)
}

/// Expands num/den (deg num = d, deg den = d − 1, ascending) into `n` ladder elements at
/// infinity, in double-double arithmetic: the expansion is a polynomial Euclidean algorithm,
/// which loses about 9 digits by order 8 in plain f64 although the values themselves are well
/// conditioned. Returns the elements and the final constant g(n+1).
fn cauer_at_infinity(mut num: Vec<Wide>, mut den: Vec<Wide>, n: usize) -> Result<(Vec<f64>, f64), String> {
    let mut g = Vec::with_capacity(n);
    for step in 1..=n {
        let d = den.len();
        if num.len() != d + 1 || d == 0 {
            return Err(format!("degrees went wrong at element {step}"));
        }
        let element = num[d] / den[d - 1];
        if !(element.hi.is_finite() && element.hi > 0.0) {
            return Err(format!("element {step} came out as {}", element.hi));
        }
        g.push(element.hi);
        let scale = num.iter().chain(&den).fold(0.0f64, |m, x| m.max(x.hi.abs()));
        for i in 0..d {
            num[i + 1] = num[i + 1] - element * den[i];
        }
        num.truncate(d);
        if step < n {
            // The s^(d−1) coefficient cancels in exact arithmetic (the remainder has a zero at
            // infinity); a large residue means the input was not a ladder function.
            let residue = num[d - 1].hi;
            if residue.abs() > 1e-6 * scale.max(f64::MIN_POSITIVE) {
                return Err(format!("the remainder after element {step} kept a residue of {residue:e}"));
            }
            num.truncate(d - 1);
        }
        std::mem::swap(&mut num, &mut den);
    }
    // Now num/den are constants: the last function is g(n+1).
    Ok((g, num[0].hi / den[0].hi))
}

/// Darlington synthesis of the doubly terminated all-pole ladder with |S21|² = t·D(0)²/|D(jω)|²,
/// t = 4r/(1 + r)², series first; returns (g, g(n+1)) with g(n+1) from the requested ratio
/// (checked against the expansion's own remainder). The reflection zeros are found in f64 and
/// polished, like everything after them, in double-double arithmetic.
fn darlington(denominator: &[f64], ratio: f64, zeros: ZeroChoice) -> Result<(Vec<f64>, f64), String> {
    let n = denominator.len() - 1;
    let d: Vec<Wide> = denominator.iter().map(|&x| Wide::from(x)).collect();
    let reflected: Vec<Wide> = d.iter().enumerate().map(|(k, &x)| if k % 2 == 0 { x } else { -x }).collect();
    // P(s) = D(s)D(−s) − t·D(0)², an even polynomial of degree 2n.
    let mut p = vec![Wide::from(0.0); 2 * n + 1];
    // The size of the terms summed into each coefficient, to tell a coefficient that cancels
    // exactly (LR: B(s)²B(−s)² − 1 has u^(n/2) as its lowest term) from a small one.
    let mut term_size = vec![0.0f64; 2 * n + 1];
    for (i, &x) in d.iter().enumerate() {
        for (j, &y) in reflected.iter().enumerate() {
            if (i + j) % 2 == 0 {
                p[i + j] = p[i + j] + x * y;
                term_size[i + j] += (x.hi * y.hi).abs();
            }
        }
    }
    p[0] = if ratio == 1.0 {
        Wide::from(0.0)
    } else {
        // 1 − t = ((r − 1)/(r + 1))², without cancellation.
        let q = (Wide::from(ratio) - Wide::from(1.0)) / (Wide::from(ratio) + Wide::from(1.0));
        d[0] * d[0] * q * q
    };
    let at_origin = (0..=n).take_while(|&k| p[2 * k].hi.abs() <= 1e-13 * term_size[2 * k]).count();
    for k in 0..at_origin {
        p[2 * k] = Wide::from(0.0);
    }
    let mut zeros_s = vec![WideComplex::from(Complex64::new(0.0, 0.0)); at_origin];
    if at_origin < n {
        let u_polynomial: Vec<f64> = (at_origin..=n).map(|k| p[2 * k].hi).collect();
        let u_roots = polynomial_roots(&u_polynomial).ok_or("the reflection-zero polynomial did not converge")?;
        let derivative: Vec<Wide> = p.iter().enumerate().skip(1).map(|(k, &c)| c * Wide::from(k as f64)).collect();
        // Real roots in u stay exactly real, so that their zeros in s are exactly real too.
        let u_roots: Vec<Complex64> = u_roots
            .into_iter()
            .map(|u| if u.im.abs() <= 1e-9 * u.norm() { Complex64::new(u.re, 0.0) } else { u })
            .collect();
        let mirrored = match zeros {
            ZeroChoice::LeftButSmallestReal => Some(
                (0..u_roots.len())
                    .filter(|&k| u_roots[k].im == 0.0 && u_roots[k].re > 0.0)
                    .min_by(|&a, &b| u_roots[a].re.total_cmp(&u_roots[b].re))
                    .ok_or("there is no real reflection zero to mirror, so this ratio needs the other first element")?,
            ),
            _ => None,
        };
        for (k, u) in u_roots.into_iter().enumerate() {
            let root = u.sqrt();
            if root.re.abs() <= 1e-9 * root.norm() {
                return Err(format!("a reflection zero lies on the jω axis ({root}); this synthesis cannot pair it"));
            }
            let right = match zeros {
                ZeroChoice::Left => false,
                ZeroChoice::Right => true,
                ZeroChoice::LeftButSmallestReal => mirrored == Some(k),
            };
            let mut z = WideComplex::from(if right { root } else { -root });
            for _ in 0..3 {
                let slope = WideComplex::evaluate(&derivative, z);
                if slope.re.hi == 0.0 && slope.im.hi == 0.0 {
                    break;
                }
                z = z - WideComplex::evaluate(&p, z) / slope;
            }
            zeros_s.push(z);
        }
    }
    // N(s) = lead·Π(s − z): the zeros come in conjugate pairs, so its imaginary parts vanish.
    let mut reflection = vec![WideComplex::from(Complex64::new(denominator[n], 0.0))];
    for &z in &zeros_s {
        let mut next = vec![WideComplex::from(Complex64::new(0.0, 0.0)); reflection.len() + 1];
        for (k, &c) in reflection.iter().enumerate() {
            next[k + 1] = next[k + 1] + c;
            next[k] = next[k] - c * z;
        }
        reflection = next;
    }
    let sum: Vec<Wide> = d.iter().zip(&reflection).map(|(&x, r)| x + r.re).collect();
    let mut difference: Vec<Wide> = d.iter().zip(&reflection).map(|(&x, r)| x - r.re).collect();
    difference.truncate(n);
    let (g, remainder) = cauer_at_infinity(sum, difference, n)?;
    let load = if n % 2 == 0 { ratio } else { 1.0 / ratio };
    if (remainder - load).abs() > 1e-9 * load {
        return Err(format!("the expansion ended in {remainder}, not the requested load {load}"));
    }
    Ok((g, load))
}

/// A double-double number hi + lo with |lo| ≤ ulp(hi)/2, about 32 significant digits (Dekker,
/// "A floating-point technique for extending the available precision", Numer. Math. 18, 1971;
/// the algorithms as in Hida, Li & Bailey's QD library).
#[derive(Debug, Clone, Copy, PartialEq)]
struct Wide {
    hi: f64,
    lo: f64,
}

/// A complex number of two [`Wide`] parts.
#[derive(Debug, Clone, Copy, PartialEq)]
struct WideComplex {
    re: Wide,
    im: Wide,
}

impl Wide {
    fn two_sum(a: f64, b: f64) -> Wide {
        let s = a + b;
        let bb = s - a;
        Wide { hi: s, lo: (a - (s - bb)) + (b - bb) }
    }

    fn quick_two_sum(a: f64, b: f64) -> Wide {
        let s = a + b;
        Wide { hi: s, lo: b - (s - a) }
    }
}

impl From<f64> for Wide {
    fn from(x: f64) -> Self {
        Wide { hi: x, lo: 0.0 }
    }
}

impl std::ops::Add for Wide {
    type Output = Wide;
    fn add(self, other: Wide) -> Wide {
        let s = Wide::two_sum(self.hi, other.hi);
        let t = Wide::two_sum(self.lo, other.lo);
        let s = Wide::quick_two_sum(s.hi, s.lo + t.hi);
        Wide::quick_two_sum(s.hi, s.lo + t.lo)
    }
}

impl std::ops::Neg for Wide {
    type Output = Wide;
    fn neg(self) -> Wide {
        Wide { hi: -self.hi, lo: -self.lo }
    }
}

impl std::ops::Sub for Wide {
    type Output = Wide;
    fn sub(self, other: Wide) -> Wide {
        self + (-other)
    }
}

impl std::ops::Mul for Wide {
    type Output = Wide;
    fn mul(self, other: Wide) -> Wide {
        let product = self.hi * other.hi;
        // The exact error of the product, by a fused multiply-add.
        let error = self.hi.mul_add(other.hi, -product) + (self.hi * other.lo + self.lo * other.hi);
        Wide::quick_two_sum(product, error)
    }
}

impl std::ops::Div for Wide {
    type Output = Wide;
    fn div(self, other: Wide) -> Wide {
        let q1 = self.hi / other.hi;
        let r = self - other * Wide::from(q1);
        let q2 = r.hi / other.hi;
        let r = r - other * Wide::from(q2);
        let q3 = r.hi / other.hi;
        Wide::quick_two_sum(q1, q2) + Wide::from(q3)
    }
}

impl From<Complex64> for WideComplex {
    fn from(z: Complex64) -> Self {
        WideComplex { re: Wide::from(z.re), im: Wide::from(z.im) }
    }
}

impl WideComplex {
    /// Horner evaluation of an ascending real polynomial.
    fn evaluate(coefficients: &[Wide], z: WideComplex) -> WideComplex {
        let zero = Wide::from(0.0);
        coefficients.iter().rev().fold(WideComplex { re: zero, im: zero }, |acc, &c| {
            let product = acc * z;
            WideComplex { re: product.re + c, im: product.im }
        })
    }
}

impl std::ops::Add for WideComplex {
    type Output = WideComplex;
    fn add(self, other: WideComplex) -> WideComplex {
        WideComplex { re: self.re + other.re, im: self.im + other.im }
    }
}

impl std::ops::Sub for WideComplex {
    type Output = WideComplex;
    fn sub(self, other: WideComplex) -> WideComplex {
        WideComplex { re: self.re - other.re, im: self.im - other.im }
    }
}

impl std::ops::Mul for WideComplex {
    type Output = WideComplex;
    fn mul(self, other: WideComplex) -> WideComplex {
        WideComplex { re: self.re * other.re - self.im * other.im, im: self.re * other.im + self.im * other.re }
    }
}

impl std::ops::Div for WideComplex {
    type Output = WideComplex;
    fn div(self, other: WideComplex) -> WideComplex {
        let norm = other.re * other.re + other.im * other.im;
        let conjugate = WideComplex { re: other.re, im: -other.im };
        let top = self * conjugate;
        WideComplex { re: top.re / norm, im: top.im / norm }
    }
}

/// Evaluates an ascending real polynomial at a complex point (Horner).
fn evaluate(coefficients: &[f64], s: Complex64) -> Complex64 {
    coefficients.iter().rev().fold(Complex64::new(0.0, 0.0), |acc, &c| acc * s + c)
}

/// lead·Π(s − root), ascending; the roots come in conjugate pairs, so the imaginary parts vanish.
fn real_polynomial(roots: &[Complex64], lead: f64) -> Vec<f64> {
    let mut out = vec![Complex64::new(lead, 0.0)];
    for &root in roots {
        let mut next = vec![Complex64::new(0.0, 0.0); out.len() + 1];
        for (k, &c) in out.iter().enumerate() {
            next[k + 1] += c;
            next[k] -= c * root;
        }
        out = next;
    }
    out.into_iter().map(|c| c.re).collect()
}

/// The roots of an ascending real polynomial with a non-zero constant term, by the
/// Aberth–Ehrlich simultaneous iteration, each root then polished by Newton steps on the
/// polynomial itself. `None` if the iteration does not settle.
fn polynomial_roots(coefficients: &[f64]) -> Option<Vec<Complex64>> {
    let degree = coefficients.len() - 1;
    if degree == 0 || coefficients[degree] == 0.0 || coefficients[0] == 0.0 {
        return None;
    }
    let derivative: Vec<f64> = coefficients.iter().enumerate().skip(1).map(|(k, &c)| k as f64 * c).collect();
    let newton = |z: Complex64| {
        let value = evaluate(coefficients, z);
        let slope = evaluate(&derivative, z);
        if slope.norm() == 0.0 {
            Complex64::new(0.0, 0.0)
        } else {
            value / slope
        }
    };
    // Start on a circle of the roots' geometric-mean radius, rotated off the real axis.
    let radius = (coefficients[0] / coefficients[degree]).abs().powf(1.0 / degree as f64);
    let mut z: Vec<Complex64> =
        (0..degree).map(|k| Complex64::from_polar(radius, 2.0 * PI * k as f64 / degree as f64 + 0.4)).collect();
    let mut settled = false;
    for _ in 0..500 {
        let mut largest_step = 0.0f64;
        for i in 0..degree {
            let ratio = newton(z[i]);
            let repulsion: Complex64 = (0..degree).filter(|&j| j != i).map(|j| 1.0 / (z[i] - z[j])).sum();
            let step = ratio / (1.0 - ratio * repulsion);
            z[i] -= step;
            largest_step = largest_step.max(step.norm() / z[i].norm().max(f64::MIN_POSITIVE));
        }
        if largest_step < 1e-12 {
            settled = true;
            break;
        }
    }
    for root in &mut z {
        for _ in 0..3 {
            *root -= newton(*root);
        }
    }
    (settled && z.iter().all(|r| r.re.is_finite() && r.im.is_finite())).then_some(z)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::mna::{AcSystem, Detail};

    /// Tables printed to 6 decimals support an absolute tolerance of half a unit in the last place.
    const TABLE_TOLERANCE: f64 = 5e-7;

    fn chebyshev(ripple_db: f64) -> Alignment {
        Alignment::Chebyshev { ripple_db }
    }

    fn bessel(normalization: BesselNormalization) -> Alignment {
        Alignment::Bessel { normalization }
    }

    /// Checks g1..gn and g(n+1) of the default form against a table row.
    fn check(alignment: Alignment, termination: Termination, expected: &[f64], expected_load: f64, tolerance: f64) {
        let n = expected.len();
        let prototype = prototype_values(alignment, n, termination).unwrap();
        assert_eq!(prototype.g.len(), n);
        for (k, (got, want)) in prototype.g.iter().zip(expected).enumerate() {
            assert!((got - want).abs() <= tolerance, "{alignment:?} n={n} g{}: {got} vs {want}", k + 1);
        }
        assert!(
            (prototype.load - expected_load).abs() <= tolerance,
            "{alignment:?} n={n} g(n+1): {} vs {expected_load}",
            prototype.load
        );
    }

    // Source: references.md §2.1 (computed from g_k = 2·sin((2k−1)π/2n); RF Cafe lists the same
    // numbers to 5 decimals).
    #[allow(clippy::approx_constant)] // table values as printed, not the constants
    const BUTTERWORTH: [&[f64]; 7] = [
        &[2.000000],
        &[1.414214, 1.414214],
        &[1.000000, 2.000000, 1.000000],
        &[0.765367, 1.847759, 1.847759, 0.765367],
        &[0.618034, 1.618034, 2.000000, 1.618034, 0.618034],
        &[0.517638, 1.414214, 1.931852, 1.931852, 1.414214, 0.517638],
        &[0.445042, 1.246980, 1.801938, 2.000000, 1.801938, 1.246980, 0.445042],
    ];

    #[test]
    fn butterworth_matches_the_table() {
        for row in BUTTERWORTH {
            check(Alignment::Butterworth, Termination::Equal, row, 1.0, TABLE_TOLERANCE);
        }
    }

    // Source: references.md §2.2, 0.5 dB (MYJ recursion, cross-checked there by Darlington
    // synthesis from scipy.signal.cheb1ap poles to ≤ 1e-6; Pozar Table 8.4 agrees to 4 decimals
    // for n = 1–6). Last entry: g(n+1).
    const CHEBYSHEV_HALF_DB: [&[f64]; 7] = [
        &[0.698623, 1.0],
        &[1.402894, 0.707084, 1.984056],
        &[1.596280, 1.096692, 1.596280, 1.0],
        &[1.670306, 1.192565, 2.366115, 0.841864, 1.984056],
        &[1.705770, 1.229627, 2.540827, 1.229627, 1.705770, 1.0],
        &[1.725363, 1.247868, 2.606366, 1.313656, 2.475841, 0.869614, 1.984056],
        &[1.737291, 1.258236, 2.638292, 1.344334, 2.638292, 1.258236, 1.737291, 1.0],
    ];

    // Source: references.md §2.2, 1 dB (same provenance as the 0.5 dB table). Last entry: g(n+1).
    const CHEBYSHEV_ONE_DB: [&[f64]; 7] = [
        &[1.017694, 1.0],
        &[1.821934, 0.685009, 2.659723],
        &[2.023593, 0.994102, 2.023593, 1.0],
        &[2.099051, 1.064441, 2.831117, 0.789199, 2.659723],
        &[2.134882, 1.091107, 3.000923, 1.091107, 2.134882, 1.0],
        &[2.154590, 1.104133, 3.063421, 1.151782, 2.936688, 0.810081, 2.659723],
        &[2.166557, 1.111509, 3.093642, 1.173521, 3.093642, 1.111509, 2.166557, 1.0],
    ];

    #[test]
    fn chebyshev_matches_the_tables() {
        for (ripple_db, table) in [(0.5, CHEBYSHEV_HALF_DB), (1.0, CHEBYSHEV_ONE_DB)] {
            for row in table {
                let (g, load) = row.split_at(row.len() - 1);
                check(chebyshev(ripple_db), Termination::Equal, g, load[0], TABLE_TOLERANCE);
            }
        }
    }

    #[test]
    fn even_chebyshev_reports_its_natural_load() {
        // Source: references.md §2.2 conventions: L-first R_load = g(n+1) = 1.9841 Ω, C-first
        // R_load = 1/g(n+1) = 0.5040 Ω for 0.5 dB.
        for n in [2, 4, 6, 8] {
            let series = prototype_values_for(chebyshev(0.5), n, Termination::Equal, FirstElement::Series).unwrap();
            let shunt = prototype_values_for(chebyshev(0.5), n, Termination::Equal, FirstElement::Shunt).unwrap();
            assert!((series.load_resistance() - 1.984056).abs() < TABLE_TOLERANCE);
            assert!((shunt.load_resistance() - 1.0 / 1.984056).abs() < TABLE_TOLERANCE);
        }
    }

    // Source: references.md §2.3(a), −3 dB normalised, small element first; agrees with RF Cafe
    // and Winder Table 2.3 "Bessel LC Values Rs = 1" to all printed digits. n = 1 is 2.000
    // (same section).
    const BESSEL_MAGNITUDE: [&[f64]; 7] = [
        &[2.000000],
        &[0.575503, 2.147806],
        &[0.337421, 0.970512, 2.203411],
        &[0.233416, 0.672525, 1.081516, 2.240379],
        &[0.174319, 0.507241, 0.804011, 1.111033, 2.258217],
        &[0.136492, 0.400190, 0.639155, 0.853786, 1.112643, 2.264524],
        &[0.110562, 0.325888, 0.524893, 0.702009, 0.869027, 1.105164, 2.265901],
    ];

    // Source: references.md §2.3(b), delay-normalised, large element first (the MYJ/Pozar
    // layout, from memory there); n = 2–4 also appear in public code as [1.5774, 0.4226],
    // [1.2550, 0.5528, 0.1922], [1.0598, 0.5116, 0.3181, 0.1104]. n = 1 is 2 (B = s + 1).
    const BESSEL_DELAY: [&[f64]; 7] = [
        &[2.000000],
        &[1.577350, 0.422650],
        &[1.255024, 0.552786, 0.192189],
        &[1.059823, 0.511617, 0.318141, 0.110419],
        &[0.930299, 0.457703, 0.331222, 0.208964, 0.071813],
        &[0.837659, 0.411572, 0.315820, 0.236427, 0.148032, 0.050489],
        &[0.767654, 0.374413, 0.294413, 0.237830, 0.177826, 0.110406, 0.037457],
    ];

    #[test]
    fn bessel_matches_the_tables() {
        for row in BESSEL_MAGNITUDE {
            check(bessel(BesselNormalization::Magnitude), Termination::Equal, row, 1.0, TABLE_TOLERANCE);
        }
        for row in BESSEL_DELAY {
            check(bessel(BesselNormalization::Delay), Termination::Equal, row, 1.0, TABLE_TOLERANCE);
        }
    }

    #[test]
    fn bessel_normalisations_are_scalings_of_each_other() {
        // Source: references.md §2.3 consistency check: (a) = reversed (b) × ω3dB of the
        // delay-normalised filter, 1.361654 for n = 2.
        let delay = prototype_values(bessel(BesselNormalization::Delay), 2, Termination::Equal).unwrap();
        let magnitude = prototype_values(bessel(BesselNormalization::Magnitude), 2, Termination::Equal).unwrap();
        assert!((magnitude.g[0] / delay.g[1] - 1.361654).abs() < 1e-6);
        for n in 1..=MAX_ORDER {
            let delay = prototype_values(bessel(BesselNormalization::Delay), n, Termination::Equal).unwrap();
            let phase = prototype_values(bessel(BesselNormalization::Phase), n, Termination::Equal).unwrap();
            // Phase normalisation scales s by b0^(1/n) relative to the delay one (scipy besselap,
            // common practice): each element is b0^(1/n) times larger, and the layout is reversed.
            let b0 = test_bessel_polynomial(n)[0];
            for (p, d) in phase.g.iter().zip(delay.g.iter().rev()) {
                assert!((p / d - b0.powf(1.0 / n as f64)).abs() < 1e-9, "n={n}");
            }
        }
    }

    // Source: common practice (the singly terminated Butterworth values with a zero-impedance
    // source, as printed in filter handbooks; the 4-decimal values are from memory), listed from
    // the ideal source.
    #[allow(clippy::approx_constant)] // table values as printed, not the constants
    const BUTTERWORTH_IDEAL_SOURCE: [&[f64]; 4] = [
        &[1.4142, 0.7071],
        &[1.5000, 1.3333, 0.5000],
        &[1.5307, 1.5772, 1.0824, 0.3827],
        &[1.5451, 1.6944, 1.3820, 0.8944, 0.3090],
    ];

    #[test]
    fn singly_terminated_butterworth_matches_memory_and_the_continued_fraction() {
        for row in BUTTERWORTH_IDEAL_SOURCE {
            check(Alignment::Butterworth, Termination::IdealSource, row, 1.0, 5e-5);
        }
        // Independent route: the Cauer expansion of the Butterworth polynomial's even/odd ratio.
        for n in 1..=MAX_ORDER {
            let closed = butterworth_singly(n);
            let expanded = cauer_even_odd(&test_butterworth_polynomial(n)).unwrap();
            for (a, b) in closed.iter().zip(&expanded) {
                assert!((a - b).abs() < 1e-12 * a.max(1.0), "n={n}: {closed:?} vs {expanded:?}");
            }
            // The open-load ladder is the ideal-source ladder read from the other end.
            let ideal = prototype_values(Alignment::Butterworth, n, Termination::IdealSource).unwrap();
            let open = prototype_values(Alignment::Butterworth, n, Termination::OpenLoad).unwrap();
            let reversed: Vec<f64> = ideal.g.iter().rev().copied().collect();
            assert_eq!(open.g, reversed);
        }
    }

    #[test]
    fn closed_forms_agree_with_darlington_synthesis() {
        // Independent route: reflection zeros found by the root finder, then the continued
        // fraction, against the closed-form recursions (Butterworth and Chebyshev, unequal).
        let mut worst = 0.0f64;
        for n in 1..=MAX_ORDER {
            for ratio in [2.0, 3.0, 8.0, 0.5, 1.0 / 3.0] {
                if n % 2 == 0 && ratio < 1.0 {
                    continue;
                }
                let zeros = if ratio >= 1.0 { ZeroChoice::Left } else { ZeroChoice::Right };
                let mut cases = vec![(test_butterworth_polynomial(n), butterworth_doubly(n, ratio))];
                for ripple_db in [0.5, 1.0] {
                    if let Ok(closed) = chebyshev_doubly(n, ripple_db, Some(ratio)) {
                        let d = real_polynomial(&chebyshev_poles(n, ripple_db), 1.0);
                        cases.push((d, closed));
                    }
                }
                for (d, (g, load)) in cases {
                    let (g_d, load_d) = darlington(&d, ratio, zeros).unwrap();
                    assert_eq!(load, load_d);
                    for (a, b) in g.iter().zip(&g_d) {
                        worst = worst.max((a - b).abs() / a);
                    }
                }
            }
        }
        eprintln!("closed form vs Darlington, unequal terminations: worst relative difference {worst:.2e}");
        // Both routes are exact for their inputs; the Darlington input is the f64-rounded polynomial.
        assert!(worst < 1e-12, "worst {worst}");
    }

    #[test]
    fn equal_butterworth_agrees_with_the_exact_darlington_expansion() {
        // With equal terminations every Butterworth reflection zero is at s = 0, so N(s) = s^n
        // exactly and Z = (D + s^n)/(D − s^n) needs no roots.
        for n in 1..=MAX_ORDER {
            let d = test_butterworth_polynomial(n);
            let mut sum = d.clone();
            sum[n] += 1.0;
            let mut difference = d.clone();
            difference.truncate(n);
            let wide = |v: Vec<f64>| v.into_iter().map(Wide::from).collect::<Vec<_>>();
            let (g, load) = cauer_at_infinity(wide(sum), wide(difference), n).unwrap();
            let (closed, _) = butterworth_doubly(n, 1.0);
            for (a, b) in g.iter().zip(&closed) {
                assert!((a - b).abs() < 1e-10, "n={n}: {g:?} vs {closed:?}");
            }
            assert!((load - 1.0).abs() < 1e-10);
        }
    }

    #[test]
    fn bessel_polynomial_matches_the_reference_lists() {
        // Source: references.md §3.2, reverse Bessel polynomials from scipy besselap(norm='delay'),
        // highest power first.
        let lists: [&[f64]; 6] = [
            &[1.0, 3.0, 3.0],
            &[1.0, 6.0, 15.0, 15.0],
            &[1.0, 10.0, 45.0, 105.0, 105.0],
            &[1.0, 15.0, 105.0, 420.0, 945.0, 945.0],
            &[1.0, 21.0, 210.0, 1260.0, 4725.0, 10395.0, 10395.0],
            &[1.0, 28.0, 378.0, 3150.0, 17325.0, 62370.0, 135135.0, 135135.0],
        ];
        for (index, list) in lists.iter().enumerate() {
            let n = index + 2;
            let mut ascending = list.to_vec();
            ascending.reverse();
            assert_eq!(bessel_delay_polynomial(n), ascending);
            assert_eq!(test_bessel_polynomial(n), ascending);
        }
    }

    #[test]
    fn root_finder_recovers_known_roots() {
        // (u − 1)(u + 2)(u² + 2u + 5) = u⁴ + 3u³ + 5u² + u − 10; roots 1, −2, −1 ± 2j.
        let roots = polynomial_roots(&[-10.0, 1.0, 5.0, 3.0, 1.0]).unwrap();
        for want in
            [Complex64::new(1.0, 0.0), Complex64::new(-2.0, 0.0), Complex64::new(-1.0, 2.0), Complex64::new(-1.0, -2.0)]
        {
            assert!(roots.iter().any(|r| (r - want).norm() < 1e-13), "{want} not in {roots:?}");
        }
        assert!(polynomial_roots(&[0.0, 1.0]).is_none());
    }

    // ----- sweeps of the synthesized circuits against the prototype response -----

    /// The reverse Bessel polynomial by the recurrence θ_n = (2n − 1)·θ_(n−1) + s²·θ_(n−2)
    /// (common practice), independent of the factorial formula in the code.
    fn test_bessel_polynomial(n: usize) -> Vec<f64> {
        let (mut previous, mut current) = (vec![1.0], vec![1.0, 1.0]);
        if n == 0 {
            return previous;
        }
        for k in 2..=n {
            let mut next = vec![0.0; k + 1];
            for (i, c) in current.iter().enumerate() {
                next[i] += (2 * k - 1) as f64 * c;
            }
            for (i, c) in previous.iter().enumerate() {
                next[i + 2] += c;
            }
            previous = current;
            current = next;
        }
        current
    }

    /// Π(s − p) over the Butterworth poles p = −sin θ + j·cos θ.
    fn test_butterworth_polynomial(n: usize) -> Vec<f64> {
        let poles: Vec<Complex64> = (1..=n)
            .map(|k| {
                let theta = (2 * k - 1) as f64 * PI / (2 * n) as f64;
                Complex64::new(-theta.sin(), theta.cos())
            })
            .collect();
        real_polynomial(&poles, 1.0)
    }

    fn test_polynomial_value(coefficients: &[f64], s: Complex64) -> Complex64 {
        coefficients.iter().rev().fold(Complex64::new(0.0, 0.0), |acc, &c| acc * s + c)
    }

    /// The frequency scale that puts the delay-normalised Bessel filter into `normalization`.
    fn test_bessel_scale(n: usize, normalization: BesselNormalization) -> f64 {
        let b = test_bessel_polynomial(n);
        match normalization {
            BesselNormalization::Delay => 1.0,
            BesselNormalization::Phase => b[0].powf(1.0 / n as f64),
            BesselNormalization::Magnitude => {
                // Bisection for |B(jω)|² = 2·B(0)² on the delay-normalised polynomial.
                let excess = |w: f64| test_polynomial_value(&b, Complex64::new(0.0, w)).norm_sqr() - 2.0 * b[0] * b[0];
                let (mut low, mut high) = (0.0, 64.0);
                for _ in 0..100 {
                    let middle = 0.5 * (low + high);
                    if excess(middle) < 0.0 {
                        low = middle;
                    } else {
                        high = middle;
                    }
                }
                0.5 * (low + high)
            }
        }
    }

    /// The series-first even-order Bessel step-down limit from a scan of
    /// Q(u) = B(√u)·B(−√u) − B(0)² on the delay-normalised polynomial (the reflection zeros have a
    /// real member exactly when ((1 − r)/(1 + r))² ≤ −min Q/B(0)²): a grid and a golden-section
    /// refinement, independent of the root finder the code uses.
    fn test_bessel_step_down_limit(n: usize) -> f64 {
        let b = test_bessel_polynomial(n);
        let q = |u: f64| {
            let x = u.sqrt();
            let plus: f64 = b.iter().rev().fold(0.0, |acc, &c| acc * x + c);
            let minus: f64 = b.iter().rev().fold(0.0, |acc, &c| acc * -x + c);
            plus * minus - b[0] * b[0]
        };
        let (steps, top) = (20000, 16.0 * (n * n) as f64);
        let step = top / steps as f64;
        let best = (1..=steps).map(|i| step * i as f64).fold(step, |a, u| if q(u) < q(a) { u } else { a });
        let (mut low, mut high) = (best - step, best + step);
        for _ in 0..200 {
            let (a, c) = (low + (high - low) * 0.381966, high - (high - low) * 0.381966);
            if q(a) < q(c) {
                high = c;
            } else {
                low = a;
            }
        }
        let m = (-q(0.5 * (low + high)) / (b[0] * b[0])).max(0.0);
        (1.0 - m.sqrt()) / (1.0 + m.sqrt())
    }

    #[test]
    fn second_order_bessel_steps_down_to_one_third() {
        // Derived here (common practice algebra): with B = s² + 3s + 3, P(u) = u² − 3u + 9·(1 − t)
        // has real roots exactly when 1 − t = ((1 − r)/(1 + r))² ≤ 1/4, i.e. r ≥ 1/3.
        assert!((bessel_step_down_limit(2) - 1.0 / 3.0).abs() < 1e-12);
        assert!((test_bessel_step_down_limit(2) - 1.0 / 3.0).abs() < 1e-9);
        for n in [4, 6, 8] {
            let (code, test) = (bessel_step_down_limit(n), test_bessel_step_down_limit(n));
            eprintln!("Bessel order {n}: series-first step-down limit {code:.9} (scan {test:.9})");
            assert!(code < 1.0 && (code - test).abs() < 1e-9, "n={n}: {code} vs {test}");
        }
        let series = options(ResponseType::LowPass, FirstElement::Series);
        let magnitude = bessel(BesselNormalization::Magnitude);
        let design = synthesize_ladder(magnitude, 2, Termination::Ratio(0.34), &series).unwrap();
        assert!(sweep_error(&design, magnitude, 2, ResponseType::LowPass) < 1e-11);
        let text = error_text(magnitude, 2, Termination::Ratio(0.32), &series);
        assert!(text.contains("≥ 0.333333 (here 0.32)") && text.contains("≤ 3.000000"), "{text}");
    }

    /// F(Ω), the prototype's |H|² shape.
    fn shape(alignment: Alignment, n: usize, omega: f64) -> f64 {
        match alignment {
            Alignment::Butterworth => 1.0 / (1.0 + omega.powi(2 * n as i32)),
            Alignment::Chebyshev { ripple_db } => {
                let epsilon_squared = 10f64.powf(ripple_db / 10.0) - 1.0;
                let (mut t_previous, mut t) = (1.0, omega);
                for _ in 1..n {
                    (t_previous, t) = (t, 2.0 * omega * t - t_previous);
                }
                1.0 / (1.0 + epsilon_squared * t * t)
            }
            Alignment::Bessel { normalization } => {
                let b = test_bessel_polynomial(n);
                let scale = test_bessel_scale(n, normalization);
                (b[0] / test_polynomial_value(&b, Complex64::new(0.0, omega * scale))).norm_sqr()
            }
            // Source: the definition (prototype.rs): |B_{n/2}(jΩ)|⁴ = (1 + Ω^n)².
            Alignment::LinkwitzRiley => 1.0 / (1.0 + omega.powi(n as i32)).powi(2),
            // Source: the definition: |1 + jΩ/ωp|^(−2n) with ωp^−2 = 2^{1/n} − 1.
            Alignment::Critical => (1.0 + omega * omega * (2f64.powf(1.0 / n as f64) - 1.0)).powi(-(n as i32)),
            _ => unreachable!("no ladder for {alignment:?}"),
        }
    }

    const R0: f64 = 50.0;
    const FC: f64 = 1000.0;
    const BAND_EDGES: (f64, f64) = (800.0, 1250.0);

    fn options(response: ResponseType, first: FirstElement) -> LadderOptions {
        let band = match response {
            ResponseType::LowPass | ResponseType::HighPass => Band::Cutoff(FC),
            _ => Band::Edges { low_hz: BAND_EDGES.0, high_hz: BAND_EDGES.1 },
        };
        LadderOptions { response, band, source_resistance: R0, first, name: String::new() }
    }

    /// The test frequencies in Hz and their normalised prototype frequencies Ω.
    fn test_points(response: ResponseType) -> Vec<(f64, f64)> {
        let omegas = [0.05, 0.3, 0.7, 0.95, 1.0, 1.05, 1.5, 3.0];
        let (low, high) = BAND_EDGES;
        let (f0, bandwidth) = ((low * high).sqrt(), high - low);
        match response {
            ResponseType::LowPass => omegas.iter().map(|&w| (FC * w, w)).collect(),
            ResponseType::HighPass => omegas.iter().map(|&w| (FC / w, w)).collect(),
            ResponseType::BandPass | ResponseType::BandStop => [0.3, 0.6, 0.75, 0.8, 0.9, 1.0, 1.1, 1.25, 1.4, 2.5]
                .iter()
                .map(|&x| {
                    let f = f0 * x;
                    let omega = if response == ResponseType::BandPass {
                        (f * f - f0 * f0).abs() / (f * bandwidth)
                    } else {
                        f * bandwidth / (f0 * f0 - f * f).abs()
                    };
                    (f, omega)
                })
                .filter(|&(_, omega)| omega.is_finite() && omega < 4.0)
                .collect(),
        }
    }

    /// The worst relative error of the swept |S21|² (or |H|² when singly terminated) against
    /// |S21(0)|²·F(Ω)/F(0).
    fn sweep_error(design: &Design, alignment: Alignment, n: usize, response: ResponseType) -> f64 {
        let (circuit, probe) = design.to_circuit().unwrap();
        let mut system = AcSystem::new(&circuit, &probe);
        let rs = design.source.resistance;
        let rl = design.load.as_ref().and_then(|l| l.resistance);
        let mut worst = 0.0f64;
        for (f_hz, omega) in test_points(response) {
            let h = system.solve_at(f_hz, Detail::Transfer).unwrap().transfer;
            let expected_shape = shape(alignment, n, omega) / shape(alignment, n, 0.0);
            let (got, expected) = match rl {
                Some(rl) if rs > 0.0 => {
                    (4.0 * rs / rl * h.norm_sqr(), 4.0 * rs * rl / (rs + rl).powi(2) * expected_shape)
                }
                _ => (h.norm_sqr(), expected_shape),
            };
            worst = worst.max((got - expected).abs() / expected);
        }
        worst
    }

    /// Whether the synthesis is expected to refuse this request, from the rules alone.
    fn expect_refusal(alignment: Alignment, n: usize, termination: Termination, first: FirstElement) -> bool {
        let even = n % 2 == 0;
        match termination {
            Termination::Equal => false,
            Termination::IdealSource => first == FirstElement::Shunt,
            Termination::OpenLoad => (first == FirstElement::Series) != even,
            Termination::Ratio(r) => {
                let series_ratio = if first == FirstElement::Series { r } else { 1.0 / r };
                let natural = match alignment {
                    // (√(1 + ε²) + ε)², the even-order Chebyshev load (equal to coth²(β/4)).
                    Alignment::Chebyshev { ripple_db } if even => {
                        let epsilon = (10f64.powf(ripple_db / 10.0) - 1.0).sqrt();
                        ((1.0 + epsilon * epsilon).sqrt() + epsilon).powi(2)
                    }
                    _ => 1.0,
                };
                static BESSEL_LIMITS: std::sync::OnceLock<Vec<f64>> = std::sync::OnceLock::new();
                let lowest = match alignment {
                    Alignment::Bessel { .. } if even => {
                        BESSEL_LIMITS.get_or_init(|| (0..=MAX_ORDER).map(test_bessel_step_down_limit).collect())[n]
                    }
                    _ => 1.0,
                };
                (even && series_ratio < lowest) || series_ratio < natural && series_ratio >= 1.0 && natural > 1.0
            }
        }
    }

    const TERMINATIONS: [Termination; 9] = [
        Termination::Equal,
        Termination::Ratio(1.0),
        Termination::Ratio(2.0),
        Termination::Ratio(0.5),
        Termination::Ratio(6.0),
        Termination::Ratio(1.0 / 6.0),
        Termination::Ratio(2.2),
        Termination::IdealSource,
        Termination::OpenLoad,
    ];

    const RESPONSES: [ResponseType; 4] =
        [ResponseType::LowPass, ResponseType::HighPass, ResponseType::BandPass, ResponseType::BandStop];

    /// Sweeps every combination; returns (ladders swept, refusals, worst error).
    fn sweep_all(alignments: &[Alignment], tolerance: f64) -> (usize, usize, f64) {
        let (mut swept, mut refused, mut worst) = (0, 0, 0.0f64);
        for &alignment in alignments {
            for n in 1..=MAX_ORDER {
                for termination in TERMINATIONS {
                    for first in [FirstElement::Series, FirstElement::Shunt] {
                        for response in RESPONSES {
                            let result = synthesize_ladder(alignment, n, termination, &options(response, first));
                            let refusal = expect_refusal(alignment, n, termination, first);
                            match result {
                                Ok(design) => {
                                    assert!(
                                        !refusal,
                                        "{alignment:?} n={n} {termination:?} {first:?} should be refused"
                                    );
                                    let error = sweep_error(&design, alignment, n, response);
                                    assert!(
                                        error < tolerance,
                                        "{alignment:?} n={n} {termination:?} {first:?} {response:?}: error {error:e}"
                                    );
                                    worst = worst.max(error);
                                    swept += 1;
                                }
                                Err(error) => {
                                    assert!(refusal, "{alignment:?} n={n} {termination:?} {first:?}: {error}");
                                    assert!(matches!(error, SynthesisError::Terminations { .. }), "{error}");
                                    refused += 1;
                                }
                            }
                        }
                    }
                }
            }
        }
        (swept, refused, worst)
    }

    #[test]
    fn butterworth_and_chebyshev_ladders_match_their_prototypes() {
        let alignments = [Alignment::Butterworth, chebyshev(0.5), chebyshev(1.0), chebyshev(3.0)];
        let (swept, refused, worst) = sweep_all(&alignments, 1e-9);
        eprintln!("Butterworth/Chebyshev ladders: {swept} swept, {refused} refused as expected, worst relative error {worst:.2e}");
        assert!(swept > 1000);
    }

    #[test]
    fn bessel_ladders_match_the_bessel_polynomial() {
        let alignments = [
            bessel(BesselNormalization::Magnitude),
            bessel(BesselNormalization::Delay),
            bessel(BesselNormalization::Phase),
        ];
        // The brief allowed 1e-7 for root-finding precision; the reflection zeros are polished and
        // the expansion runs in double-double, so the ladders are good to rounding of the sweep.
        let (swept, refused, worst) = sweep_all(&alignments, 1e-11);
        eprintln!("Bessel ladders: {swept} swept, {refused} refused as expected, worst relative error {worst:.2e}");
        assert!(swept > 1000);
    }

    #[test]
    fn ratio_terminations_give_the_asked_load() {
        for (alignment, n, ratio, first) in [
            (Alignment::Butterworth, 4, 3.0, FirstElement::Series),
            (Alignment::Butterworth, 4, 0.25, FirstElement::Shunt),
            (chebyshev(0.5), 5, 0.4, FirstElement::Series),
            (bessel(BesselNormalization::Magnitude), 3, 0.4, FirstElement::Shunt),
        ] {
            let design =
                synthesize_ladder(alignment, n, Termination::Ratio(ratio), &options(ResponseType::LowPass, first))
                    .unwrap();
            let rl = design.load.unwrap().resistance.unwrap();
            assert!((rl / design.source.resistance - ratio).abs() < 1e-12 * ratio);
        }
    }

    // ----- the designs themselves -----

    #[test]
    fn lowpass_design_has_the_denormalised_parts() {
        let design = synthesize_ladder(
            Alignment::Butterworth,
            3,
            Termination::Equal,
            &options(ResponseType::LowPass, FirstElement::Series),
        )
        .unwrap();
        let omega_c = 2.0 * PI * FC;
        // g = [1, 2, 1]: L = g·R0/ωc, C = g/(R0·ωc).
        let expected = [
            inductor("L1".into(), "in", "n2", R0 / omega_c),
            capacitor("C2".into(), "n2", "0", 2.0 / (R0 * omega_c)),
            inductor("L3".into(), "n2", "out", R0 / omega_c),
        ];
        assert_eq!(design.elements.len(), 3);
        for (got, want) in design.elements.iter().zip(&expected) {
            match (got, want) {
                (Part::Inductor { value: a, .. }, Part::Inductor { value: b, .. })
                | (Part::Capacitor { value: a, .. }, Part::Capacitor { value: b, .. }) => {
                    assert!((a - b).abs() < 1e-15 * b);
                    assert_eq!(got.reference(), want.reference());
                    assert_eq!(got.nodes(), want.nodes());
                }
                _ => panic!("{got:?} is not like {want:?}"),
            }
        }
        assert_eq!(design.source, Source { node: "in".into(), resistance: R0, amplitude: 1.0 });
        assert_eq!(design.load, Some(Load { node: "out".into(), resistance: Some(R0), capacitance: None }));
        assert_eq!(design.output, "out");
        assert!(design.note.contains("Butterworth") && design.note.contains("order 3"), "{}", design.note);
        assert!(design.note.contains("equal") || design.note.contains("load 50 Ω"), "{}", design.note);
        // The design file round-trips.
        assert_eq!(crate::design::parse_design(&design.to_json()).unwrap(), design);
    }

    #[test]
    fn highpass_and_band_designs_use_the_element_transformations() {
        let hp = synthesize_ladder(
            Alignment::Butterworth,
            2,
            Termination::Equal,
            &options(ResponseType::HighPass, FirstElement::Shunt),
        )
        .unwrap();
        let omega_c = 2.0 * PI * FC;
        let g = 2f64.sqrt();
        match &hp.elements[..] {
            [Part::Inductor { reference: l, value: lv, .. }, Part::Capacitor { reference: c, value: cv, .. }] => {
                assert_eq!((l.as_str(), c.as_str()), ("L1", "C2"));
                assert!((lv - R0 / (g * omega_c)).abs() < 1e-15 * lv);
                assert!((cv - 1.0 / (g * R0 * omega_c)).abs() < 1e-15 * cv);
            }
            other => panic!("unexpected highpass parts {other:?}"),
        }
        let bp = synthesize_ladder(
            chebyshev(0.5),
            3,
            Termination::Equal,
            &options(ResponseType::BandPass, FirstElement::Series),
        )
        .unwrap();
        let references: Vec<&str> = bp.elements.iter().map(|p| p.reference()).collect();
        assert_eq!(references, ["L1", "C1", "L2", "C2", "L3", "C3"]);
        // Each bandpass resonator is tuned to ω0.
        let (low, high) = BAND_EDGES;
        let omega_0 = 2.0 * PI * (low * high).sqrt();
        for pair in bp.elements.chunks(2) {
            if let [Part::Inductor { value: l, .. }, Part::Capacitor { value: c, .. }] = pair {
                assert!((1.0 / (l * c).sqrt() - omega_0).abs() < 1e-9 * omega_0);
            } else {
                panic!("unexpected pair {pair:?}");
            }
        }
        let single = synthesize_ladder(
            Alignment::Butterworth,
            1,
            Termination::Equal,
            &options(ResponseType::LowPass, FirstElement::Shunt),
        )
        .unwrap();
        assert_eq!(single.output, "in");
        assert!(single.to_circuit().is_ok());
    }

    #[test]
    fn singly_terminated_designs_have_the_right_ends() {
        let ideal = synthesize_ladder(
            chebyshev(1.0),
            4,
            Termination::IdealSource,
            &options(ResponseType::LowPass, FirstElement::Series),
        )
        .unwrap();
        assert_eq!(ideal.source.resistance, 0.0);
        assert_eq!(ideal.load.as_ref().and_then(|l| l.resistance), Some(R0));
        let open = synthesize_ladder(
            chebyshev(1.0),
            5,
            Termination::OpenLoad,
            &options(ResponseType::LowPass, FirstElement::Shunt),
        )
        .unwrap();
        assert_eq!(open.source.resistance, R0);
        assert_eq!(open.load, None);
        assert!(
            matches!(open.elements.last(), Some(Part::Capacitor { nodes, .. }) if nodes[0] == "out" && nodes[1] == "0")
        );
    }

    // ----- bad input -----

    fn error_text(alignment: Alignment, n: usize, termination: Termination, options: &LadderOptions) -> String {
        synthesize_ladder(alignment, n, termination, options).unwrap_err().to_string()
    }

    #[test]
    fn bad_orders_are_refused() {
        let lp = options(ResponseType::LowPass, FirstElement::Series);
        for n in [0, 9] {
            let error = synthesize_ladder(Alignment::Butterworth, n, Termination::Equal, &lp).unwrap_err();
            assert!(matches!(error, SynthesisError::BadOrder { order, min: 1, max: 8, .. } if order == n));
            assert!(error.to_string().contains("from 1 to 8"));
        }
    }

    #[test]
    fn exact_equal_ratio_for_even_chebyshev_names_the_possible_ratios() {
        let lp = options(ResponseType::LowPass, FirstElement::Series);
        let error = synthesize_ladder(chebyshev(0.5), 4, Termination::Ratio(1.0), &lp).unwrap_err();
        assert!(matches!(error, SynthesisError::Terminations { .. }));
        let text = error.to_string();
        assert!(
            text.contains("1.984056") && text.contains("0.504018") && text.contains("equal terminations"),
            "{text}"
        );
        // Termination::Equal accepts the natural ratio instead and says so.
        let design = synthesize_ladder(chebyshev(0.5), 4, Termination::Equal, &lp).unwrap();
        let rl = design.load.unwrap().resistance.unwrap();
        assert!((rl / R0 - 1.984056).abs() < TABLE_TOLERANCE);
        assert!(design.note.contains("natural"), "{}", design.note);
    }

    #[test]
    fn impossible_terminations_say_what_is_possible() {
        let series = options(ResponseType::LowPass, FirstElement::Series);
        let shunt = options(ResponseType::LowPass, FirstElement::Shunt);
        let text = error_text(chebyshev(1.0), 6, Termination::Ratio(2.0), &series);
        assert!(text.contains("≥ 2.659723"), "{text}");
        let text = error_text(chebyshev(1.0), 6, Termination::Ratio(0.5), &shunt);
        assert!(text.contains("≤ 0.375979") && text.contains("≥ 2.659723"), "{text}");
        let text = error_text(Alignment::Butterworth, 4, Termination::Ratio(0.5), &series);
        assert!(text.contains("≥ 1 (here 0.5); with a shunt element first it takes ratios ≤ 1"), "{text}");
        let text = error_text(Alignment::Butterworth, 6, Termination::Ratio(2.0), &shunt);
        assert!(text.contains("≤ 1 (here 2); with a series element first it takes ratios ≥ 1"), "{text}");
        let text = error_text(Alignment::Butterworth, 3, Termination::IdealSource, &shunt);
        assert!(text.contains("start with a series element"), "{text}");
        let text = error_text(Alignment::Butterworth, 3, Termination::OpenLoad, &series);
        assert!(text.contains("order 3 needs a shunt element first"), "{text}");
    }

    #[test]
    fn bad_values_are_refused() {
        let mut lp = options(ResponseType::LowPass, FirstElement::Series);
        lp.band = Band::Cutoff(0.0);
        let error = synthesize_ladder(Alignment::Butterworth, 3, Termination::Equal, &lp).unwrap_err();
        assert_eq!(error, SynthesisError::BadFrequency { what: "cutoff", value: 0.0 });
        lp.band = Band::Cutoff(f64::NAN);
        assert!(synthesize_ladder(Alignment::Butterworth, 3, Termination::Equal, &lp).is_err());
        let mut lp = options(ResponseType::LowPass, FirstElement::Series);
        lp.source_resistance = -50.0;
        let error = synthesize_ladder(Alignment::Butterworth, 3, Termination::Equal, &lp).unwrap_err();
        assert_eq!(error, SynthesisError::BadValue { what: "source resistance", value: -50.0 });
        let lp = options(ResponseType::LowPass, FirstElement::Series);
        for ratio in [0.0, -2.0, f64::INFINITY, f64::NAN] {
            let error = synthesize_ladder(Alignment::Butterworth, 3, Termination::Ratio(ratio), &lp).unwrap_err();
            assert!(matches!(error, SynthesisError::BadValue { .. }), "{error}");
        }
        for ripple_db in [0.0, -1.0, 11.0, f64::NAN] {
            let error = synthesize_ladder(chebyshev(ripple_db), 3, Termination::Equal, &lp).unwrap_err();
            assert!(matches!(error, SynthesisError::BadRipple { .. }), "{error}");
        }
        let mut bp = options(ResponseType::BandPass, FirstElement::Series);
        bp.band = Band::Edges { low_hz: 2000.0, high_hz: 1000.0 };
        assert!(matches!(
            synthesize_ladder(Alignment::Butterworth, 3, Termination::Equal, &bp),
            Err(SynthesisError::BadBand { .. })
        ));
        bp.band = Band::Cutoff(1000.0);
        assert!(matches!(
            synthesize_ladder(Alignment::Butterworth, 3, Termination::Equal, &bp),
            Err(SynthesisError::Unsupported { .. })
        ));
        let mut two_edges = options(ResponseType::LowPass, FirstElement::Series);
        two_edges.band = Band::Edges { low_hz: 1000.0, high_hz: 2000.0 };
        assert!(matches!(
            synthesize_ladder(Alignment::Butterworth, 3, Termination::Equal, &two_edges),
            Err(SynthesisError::Unsupported { .. })
        ));
    }

    #[test]
    fn single_sections_point_elsewhere_and_linkwitz_riley_needs_an_even_order() {
        let lp = options(ResponseType::LowPass, FirstElement::Series);
        let text = error_text(Alignment::Quality { q: 0.9 }, 2, Termination::Equal, &lp);
        assert!(text.contains("--topology rlc"), "{text}");
        let text = error_text(Alignment::LinkwitzRiley, 3, Termination::Equal, &lp);
        assert!(text.contains("even order"), "{text}");
    }

    /// Linkwitz-Riley and critically damped ladders by the Darlington and continued-fraction
    /// routes, swept against their closed-form |H|² (see `shape`), every order, every
    /// termination and both forms where the rules allow them, lowpass, highpass and bandpass.
    #[test]
    fn linkwitz_riley_and_critical_ladders_realise_their_responses() {
        let mut checked = 0;
        for alignment in [Alignment::LinkwitzRiley, Alignment::Critical] {
            for n in 1..=MAX_ORDER {
                if alignment == Alignment::LinkwitzRiley && n % 2 == 1 {
                    continue;
                }
                for termination in [
                    Termination::Equal,
                    Termination::Ratio(2.0),
                    Termination::Ratio(0.5),
                    Termination::IdealSource,
                    Termination::OpenLoad,
                ] {
                    for first in [FirstElement::Series, FirstElement::Shunt] {
                        if expect_refusal(alignment, n, termination, first) {
                            continue;
                        }
                        for response in [ResponseType::LowPass, ResponseType::HighPass, ResponseType::BandPass] {
                            let design = synthesize_ladder(alignment, n, termination, &options(response, first))
                                .unwrap_or_else(|e| panic!("{alignment:?} n={n} {termination:?} {first:?}: {e}"));
                            let error = sweep_error(&design, alignment, n, response);
                            assert!(
                                error < 1e-9,
                                "{alignment:?} n={n} {termination:?} {first:?} {response:?}: {error}"
                            );
                            checked += 1;
                        }
                    }
                }
            }
        }
        assert!(checked > 150, "{checked}");
    }

    proptest::proptest! {
        #![proptest_config(proptest::prelude::ProptestConfig::with_cases(64))]

        /// Impedance scaling leaves H unchanged and frequency scaling shifts it (house style).
        #[test]
        fn scaling_keeps_the_normalised_response(
            r0 in 1.0f64..1e4,
            log_fc in 1.0f64..6.0,
            n in 1usize..=MAX_ORDER,
            omega in 0.1f64..3.0,
        ) {
            let fc = 10f64.powf(log_fc);
            let options = LadderOptions {
                response: ResponseType::LowPass,
                band: Band::Cutoff(fc),
                source_resistance: r0,
                first: FirstElement::Series,
                name: String::new(),
            };
            let design = synthesize_ladder(chebyshev(1.0), n, Termination::Equal, &options).unwrap();
            let reference = synthesize_ladder(
                chebyshev(1.0), n, Termination::Equal, &super::tests::options(ResponseType::LowPass, FirstElement::Series),
            ).unwrap();
            let solve = |design: &Design, f_hz: f64| {
                let (circuit, probe) = design.to_circuit().unwrap();
                AcSystem::new(&circuit, &probe).solve_at(f_hz, Detail::Transfer).unwrap().transfer
            };
            let (h, h_reference) = (solve(&design, fc * omega), solve(&reference, FC * omega));
            proptest::prop_assert!((h - h_reference).norm() < 1e-10 * h_reference.norm(), "{h} vs {h_reference}");
        }
    }
}
