//! The safety cautions that every adapter shows beside results that involve power, voltage or
//! heat. The text is common practice, not a standard; it defers to local codes and licensed
//! practice.

/// One caution: a short title and its text.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Caution {
    /// A short title.
    pub title: &'static str,
    /// The caution itself.
    pub text: &'static str,
}

/// The general cautions, in the order they are shown.
pub const CAUTIONS: &[Caution] = &[
    Caution {
        title: "Amplifier outputs",
        text:
            "Power amplifier outputs can carry hazardous voltages (a 500 W amplifier into 8 Ω swings over 60 V rms). \
               Work on crossovers with the amplifier off and its supply capacitors discharged.",
    },
    Caution {
        title: "Mains-powered equipment",
        text: "Do not build or modify mains-powered equipment unless you are qualified to. Follow local electrical \
               codes and licensed practice; nothing here replaces them.",
    },
    Caution {
        title: "Capacitor voltage ratings",
        text:
            "Choose capacitors rated well above the highest voltage they will see (a margin of at least 1.5 to 2 times \
               is common practice). Use bipolar (non-polarised) capacitors in any signal path that swings both ways.",
    },
    Caution {
        title: "Heat",
        text: "Resistors, inductors and voice coils dissipate power and get hot. Check each part's power rating with \
               margin, keep hot parts away from wiring and flammable material, and follow the driver maker's data.",
    },
    Caution {
        title: "Results are models",
        text: "Results come from component models and nominal or toleranced values. Verify a built circuit by \
               measurement before relying on it.",
    },
];
