//! What a person asks a filter to do, and why a request cannot be met: the shared vocabulary of
//! prototypes, transforms, realizations and fitting.
//!
//! Frequencies are in Hz here because that is how requirements are stated; the prototype and
//! transform code converts to rad/s once.

use std::fmt;

/// The response type.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum ResponseType {
    /// Passes below the cutoff.
    LowPass,
    /// Passes above the cutoff.
    HighPass,
    /// Passes between two edges.
    BandPass,
    /// Rejects between two edges.
    BandStop,
}

/// The alignment (the prototype's pole pattern).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Alignment {
    /// Maximally flat magnitude; −3 dB at the cutoff.
    Butterworth,
    /// Equiripple passband (type I); the cutoff is the ripple edge, where the gain is −ripple dB.
    Chebyshev {
        /// Passband ripple in dB, > 0.
        ripple_db: f64,
    },
    /// Maximally flat delay, with a stated normalisation of the cutoff.
    Bessel {
        /// What "cutoff" means.
        normalization: BesselNormalization,
    },
    /// The square of a Butterworth of half the order (even orders only); −6.02 dB at the cutoff.
    LinkwitzRiley,
    /// Critically damped: n coincident real poles, −3.01 dB at the cutoff. The response of n
    /// identical buffered first-order stages, and the natural target of an n-stage RC ladder.
    Critical,
    /// One second-order section of the given Q (order 2 only); the cutoff is f0.
    Quality {
        /// Pole quality factor Q = |p| / (2·|Re p|), > 0.
        q: f64,
    },
}

/// The normalisation of a Bessel prototype's cutoff.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default)]
pub enum BesselNormalization {
    /// −3.0103 dB at the cutoff (the default; scipy `norm='mag'`).
    #[default]
    Magnitude,
    /// Group delay at DC = 1/ωc (scipy `norm='delay'`).
    Delay,
    /// scipy's default `norm='phase'`: poles scaled so that their product is 1, which puts the
    /// phase at the cutoff at −n·π/4 exactly for n ≤ 2 and approximately (within 3 %) above.
    Phase,
}

/// The band edges of a requirement, in Hz.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Band {
    /// One cutoff (low-pass and high-pass), or f0 for a second-order section.
    Cutoff(f64),
    /// Two edges (band-pass and band-stop); the centre is their geometric mean.
    Edges {
        /// Lower edge in Hz.
        low_hz: f64,
        /// Upper edge in Hz.
        high_hz: f64,
    },
    /// Centre frequency and bandwidth (band-pass and band-stop).
    CentreBandwidth {
        /// Geometric centre in Hz.
        centre_hz: f64,
        /// Bandwidth high − low in Hz.
        bandwidth_hz: f64,
    },
}

/// Why a request cannot be met.
#[derive(Debug, Clone, PartialEq)]
pub enum SynthesisError {
    /// The order is outside what the method supports.
    BadOrder {
        /// The order asked for.
        order: usize,
        /// Lowest supported.
        min: usize,
        /// Highest supported.
        max: usize,
        /// Why, e.g. "Linkwitz-Riley needs an even order".
        why: &'static str,
    },
    /// A frequency is not finite and positive, or edges are reversed.
    BadFrequency {
        /// Which, e.g. "cutoff".
        what: &'static str,
        /// The value in Hz.
        value: f64,
    },
    /// The band edges are unusable.
    BadBand {
        /// Lower edge in Hz.
        low_hz: f64,
        /// Upper edge in Hz.
        high_hz: f64,
    },
    /// A Q outside (0, ∞) or not finite.
    BadQ {
        /// The Q.
        q: f64,
    },
    /// A Chebyshev ripple outside (0, 10] dB.
    BadRipple {
        /// The ripple in dB.
        ripple_db: f64,
    },
    /// A resistance, capacitance or inductance given to the synthesis is unusable.
    BadValue {
        /// Which, e.g. "source resistance".
        what: &'static str,
        /// The value.
        value: f64,
    },
    /// The requested Q needs complex poles, which passive RC (or RL) cannot make.
    QTooHighForRc {
        /// The largest section Q required.
        q: f64,
    },
    /// A ladder with these terminations has no exact synthesis.
    Terminations {
        /// What was asked, e.g. "Bessel order 4 with R_load/R_source = 3".
        asked: String,
        /// Why it cannot be made and what can.
        reason: String,
    },
    /// A topology that does not do this response or order.
    Unsupported {
        /// What was asked.
        asked: String,
        /// What to use instead.
        instead: String,
    },
    /// A stock list holds no usable value.
    EmptyStock {
        /// The list's name.
        name: String,
    },
    /// No combination of standard parts is within range.
    NoCandidates {
        /// Why.
        reason: String,
    },
    /// A numerical synthesis route failed (a fault in the synthesis, not in the request).
    NumericalFailure {
        /// What was asked.
        asked: String,
        /// What went wrong.
        detail: String,
    },
    /// A realization (such as an active cascade) refused the request; the message says why and
    /// what to change.
    Realization {
        /// The realization's own message.
        message: String,
    },
    // Further variants go above this line.
}

impl fmt::Display for SynthesisError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::BadOrder { order, min, max, why } => {
                write!(f, "order {order} cannot be made: {why}; use an order from {min} to {max}")
            }
            Self::BadFrequency { what, value } => {
                write!(f, "the {what} {value} Hz is not usable; give a finite frequency above 0 Hz")
            }
            Self::BadBand { low_hz, high_hz } => write!(
                f,
                "the band {low_hz} Hz to {high_hz} Hz is not usable; give two positive edges with the upper above the lower"
            ),
            Self::BadQ { q } => write!(f, "Q {q} is not usable; give a finite Q above 0"),
            Self::BadRipple { ripple_db } => {
                write!(f, "ripple {ripple_db} dB is not usable; give a passband ripple above 0 and at most 10 dB")
            }
            Self::BadValue { what, value } => write!(f, "the {what} {value} is not usable; give a finite value above 0"),
            Self::QTooHighForRc { q } => write!(
                f,
                "this response needs a section Q of {q:.4}, but passive RC (and RL) sections cannot exceed Q = 0.5; use an RLC section or an LC ladder (--topology rlc or ladder), or an active section"
            ),
            Self::Terminations { asked, reason } => write!(f, "{asked} cannot be synthesized: {reason}"),
            Self::Unsupported { asked, instead } => write!(f, "{asked} is not available; {instead}"),
            Self::EmptyStock { name } => {
                write!(f, "the stock list {name} holds no usable value; list at least one positive value per line")
            }
            Self::NoCandidates { reason } => write!(f, "no standard parts fit: {reason}"),
            Self::Realization { message } => write!(f, "{message}"),
            Self::NumericalFailure { asked, detail } => write!(
                f,
                "{asked} could not be computed: {detail}; this is a fault in the synthesis, so please report the request (a neighbouring order or ratio may work meanwhile)"
            ),
        }
    }
}

impl std::error::Error for SynthesisError {}

impl Alignment {
    /// A short lower-case name, as used in messages and the CLI.
    pub fn name(&self) -> &'static str {
        match self {
            Self::Butterworth => "butterworth",
            Self::Chebyshev { .. } => "chebyshev",
            Self::Bessel { .. } => "bessel",
            Self::LinkwitzRiley => "linkwitz-riley",
            Self::Critical => "critical",
            Self::Quality { .. } => "second-order f0/Q",
        }
    }
}

impl ResponseType {
    /// A short lower-case name.
    pub fn name(self) -> &'static str {
        match self {
            Self::LowPass => "lowpass",
            Self::HighPass => "highpass",
            Self::BandPass => "bandpass",
            Self::BandStop => "bandstop",
        }
    }
}

impl Band {
    /// The (low, high) edges in Hz for a two-edge band, after validation.
    ///
    /// # Errors
    /// [`SynthesisError::BadBand`] or [`SynthesisError::BadFrequency`].
    pub fn edges(&self) -> Result<(f64, f64), SynthesisError> {
        let (low, high) = match *self {
            Band::Edges { low_hz, high_hz } => (low_hz, high_hz),
            Band::CentreBandwidth { centre_hz, bandwidth_hz } => {
                positive("centre frequency", centre_hz)?;
                positive("bandwidth", bandwidth_hz)?;
                // f_low·f_high = f0² and f_high − f_low = B.
                let half = bandwidth_hz / 2.0;
                let low = (half * half + centre_hz * centre_hz).sqrt() - half;
                (low, low + bandwidth_hz)
            }
            Band::Cutoff(f) => {
                positive("cutoff", f)?;
                (f, f)
            }
        };
        if !(low.is_finite() && high.is_finite() && low > 0.0 && high > low) {
            return Err(SynthesisError::BadBand { low_hz: low, high_hz: high });
        }
        Ok((low, high))
    }
}

/// Checks that a frequency is finite and > 0.
///
/// # Errors
/// [`SynthesisError::BadFrequency`] naming `what`.
pub fn positive(what: &'static str, value: f64) -> Result<f64, SynthesisError> {
    if value.is_finite() && value > 0.0 {
        Ok(value)
    } else {
        Err(SynthesisError::BadFrequency { what, value })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn centre_and_bandwidth_give_geometric_edges() {
        let (low, high) = Band::CentreBandwidth { centre_hz: 1000.0, bandwidth_hz: 500.0 }.edges().unwrap();
        assert!((low * high - 1e6).abs() < 1e-6 && (high - low - 500.0).abs() < 1e-9);
    }

    #[test]
    fn reversed_edges_are_rejected() {
        let error = Band::Edges { low_hz: 2000.0, high_hz: 1000.0 }.edges().unwrap_err();
        assert!(error.to_string().contains("upper above the lower"));
    }
}
