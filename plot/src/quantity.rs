//! The quantities a panel can show, with their axis descriptions and scales.

/// What a panel plots on its y axis.
///
/// Units: magnitude in dB (20·log10|H|), phase in degrees, group delay in seconds, impedance
/// magnitude in ohms (drawn on a log axis), impedance phase in degrees.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Quantity {
    /// Transfer magnitude in dB.
    MagnitudeDb,
    /// Transfer phase in degrees.
    PhaseDeg,
    /// Group delay in seconds.
    GroupDelayS,
    /// Impedance magnitude |Z| in ohms, on a log y axis.
    ImpedanceOhm,
    /// Impedance phase in degrees.
    ImpedancePhaseDeg,
}

impl Quantity {
    /// Returns the y axis description, with the unit in parentheses, e.g. "group delay (s)".
    pub fn axis_description(self) -> &'static str {
        match self {
            Quantity::MagnitudeDb => "magnitude (dB)",
            Quantity::PhaseDeg => "phase (°)",
            Quantity::GroupDelayS => "group delay (s)",
            Quantity::ImpedanceOhm => "|Z| (Ω)",
            Quantity::ImpedancePhaseDeg => "Z phase (°)",
        }
    }

    /// Returns the short y axis description for panels too low for the long one, e.g. "τ (s)".
    pub fn short_axis_description(self) -> &'static str {
        match self {
            Quantity::MagnitudeDb => "dB",
            Quantity::PhaseDeg => "φ (°)",
            Quantity::GroupDelayS => "τ (s)",
            Quantity::ImpedanceOhm => "|Z| (Ω)",
            Quantity::ImpedancePhaseDeg => "∠Z (°)",
        }
    }

    /// Returns a short lower-case name for messages, e.g. "magnitude".
    pub fn name(self) -> &'static str {
        match self {
            Quantity::MagnitudeDb => "magnitude",
            Quantity::PhaseDeg => "phase",
            Quantity::GroupDelayS => "group delay",
            Quantity::ImpedanceOhm => "impedance magnitude",
            Quantity::ImpedancePhaseDeg => "impedance phase",
        }
    }

    /// Returns true when the y axis is logarithmic (only |Z|).
    ///
    /// On a log axis, values at or below zero cannot be shown and are treated as gaps.
    pub fn is_log_axis(self) -> bool {
        matches!(self, Quantity::ImpedanceOhm)
    }
}
