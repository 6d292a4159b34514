//! Unity-gain Sallen-Key second-order sections, low-pass and high-pass: design equations from f0
//! and Q, the closed-form H(s), sensitivities, and the parts as a [`Design`] fragment.
//!
//! # Source of the formulas
//! The unity-gain low-pass and high-pass forms and their coefficient equations are those of TI,
//! *Op Amps for Everyone* (R. Mancini, ed., 2002), ch. 16 "Active Filter Design Techniques",
//! written here **from memory** (we did not have the text at hand; its naming of the two
//! capacitors may differ from ours). So that nothing rests on memory alone, each H(s) is derived
//! below by nodal analysis with an ideal op-amp (V(−) = V(out), no input current), and the tests
//! check it against the MNA engine and against `scipy.signal.freqs` of the standard second-order
//! forms (tests/reference/active_sections.rs).
//!
//! # Low-pass ([`SallenKeyLowPass`])
//! R1 from the input to node a, R2 from a to the non-inverting input p, C1 from a to the output
//! (the feedback capacitor), C2 from p to ground; the op-amp is a follower, V(out) = V(p).
//! KCL at p: (V_a − V_p)/R2 = sC2·V_p, so V_a = V_p(1 + sR2C2). KCL at a, with V_out = V_p:
//! (V_in − V_a)/R1 = sC2·V_p + sC1(V_a − V_p). Substituting V_a:
//!
//! H(s) = 1/(1 + s·C2(R1 + R2) + s²·R1R2C1C2), so ω0 = 1/√(R1R2C1C2) and
//! Q = √(R1R2C1C2)/(C2(R1 + R2)) = [√(R1R2)/(R1 + R2)]·√(C1/C2).
//!
//! √(R1R2)/(R1 + R2) ≤ 1/2 (equality at R1 = R2), so **C1/C2 ≥ 4Q²** is needed for the Q; below
//! that ratio no real resistors exist ([`ActiveError::RatioTooSmall`]). With R1·R2 = P =
//! 1/(ω0²C1C2) and R1 + R2 = S = 1/(Q·ω0·C2), the resistors are the roots of x² − S·x + P = 0:
//! R1 = (S/2)(1 + √(1 − 4Q²·C2/C1)) (the larger root, which lowers the high-frequency
//! feedthrough through R1, see [`SallenKeyLowPass::feedthrough_limit`]) and R2 = P/R1.
//! Sensitivities (from the formulas above): S^{f0} = −1/2 for every part; S_{R1}^{Q} =
//! 1/2 − R1/(R1 + R2), S_{R2}^{Q} = 1/2 − R2/(R1 + R2), S_{C1}^{Q} = 1/2, S_{C2}^{Q} = −1/2.
//!
//! # High-pass ([`SallenKeyHighPass`])
//! C1 from the input to node a, C2 from a to p, R1 from a to the output (feedback), R2 from p to
//! ground. KCL at p: (V_a − V_p)sC2 = V_p/R2, so V_a = V_p(1 + 1/(sC2R2)); KCL at a gives
//!
//! H(s) = s²R1R2C1C2/(s²R1R2C1C2 + s·R1(C1 + C2) + 1), so ω0 = 1/√(R1R2C1C2) and
//! Q = √(R1R2C1C2)/(R1(C1 + C2)) = [√(C1C2)/(C1 + C2)]·√(R2/R1).
//!
//! Any Q is reachable by the resistor ratio; equal capacitors (common practice) give
//! R1 = 1/(2Q·ω0·C) and R2 = 2Q/(ω0·C). Sensitivities: S^{f0} = −1/2 for every part;
//! S_{C1}^{Q} = 1/2 − C1/(C1 + C2), S_{C2}^{Q} = 1/2 − C2/(C1 + C2), S_{R1}^{Q} = −1/2,
//! S_{R2}^{Q} = 1/2.
//!
//! Local references are `R1`, `R2`, `C1`, `C2` and the op-amp `U`; in a design they carry the
//! section number ([`crate::active::reference`]).

use std::f64::consts::TAU;

use num_complex::Complex64;

use crate::active::{
    add_follower, check_frequency, check_q, check_results, check_value, node, push_capacitor, push_resistor, reference,
    ActiveError, OpAmp, PartSensitivity,
};
use crate::design::Design;

/// A unity-gain Sallen-Key low-pass section (see the module docs for the circuit).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SallenKeyLowPass {
    /// Input resistor (input to node a), Ω.
    pub r1: f64,
    /// Resistor from node a to the non-inverting input, Ω.
    pub r2: f64,
    /// Feedback capacitor (node a to the output), F.
    pub c1: f64,
    /// Capacitor from the non-inverting input to ground, F.
    pub c2: f64,
}

/// A unity-gain Sallen-Key high-pass section (see the module docs for the circuit).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SallenKeyHighPass {
    /// Input capacitor (input to node a), F.
    pub c1: f64,
    /// Capacitor from node a to the non-inverting input, F.
    pub c2: f64,
    /// Feedback resistor (node a to the output), Ω.
    pub r1: f64,
    /// Resistor from the non-inverting input to ground, Ω.
    pub r2: f64,
}

impl SallenKeyLowPass {
    /// The smallest C1/C2 that gives `q`: 4Q².
    pub fn min_capacitor_ratio(q: f64) -> f64 {
        4.0 * q * q
    }

    /// Designs the section for `f0_hz` and `q` with grounded capacitor `c2` and feedback capacitor
    /// `c1 = ratio·c2`.
    ///
    /// # Errors
    /// [`ActiveError::BadFrequency`], [`ActiveError::BadQ`], [`ActiveError::BadValue`] (capacitor,
    /// ratio, or a result that overflows), or [`ActiveError::RatioTooSmall`] when
    /// ratio < 4Q².
    pub fn design(f0_hz: f64, q: f64, c2: f64, ratio: f64) -> Result<Self, ActiveError> {
        check_frequency("f0", f0_hz)?;
        check_q(q)?;
        check_value("capacitor C2", c2)?;
        check_value("capacitor ratio C1/C2", ratio)?;
        let min_ratio = Self::min_capacitor_ratio(q);
        // A ratio equal to the minimum up to rounding is the double root R1 = R2.
        if ratio < min_ratio * (1.0 - 1e-12) {
            return Err(ActiveError::RatioTooSmall { topology: "Sallen-Key", ratio, q, min_ratio });
        }
        let c1 = ratio * c2;
        let omega0 = TAU * f0_hz;
        let sum = 1.0 / (q * omega0 * c2);
        let product = 1.0 / (omega0 * omega0 * c1 * c2);
        let r1 = 0.5 * sum * (1.0 + (1.0 - min_ratio / ratio).max(0.0).sqrt());
        let r2 = product / r1;
        check_results(&[("capacitor C1", c1), ("resistor R1", r1), ("resistor R2", r2)])?;
        Ok(Self { r1, r2, c1, c2 })
    }

    /// f0 = 1/(2π·√(R1R2C1C2)) in Hz.
    pub fn f0_hz(&self) -> f64 {
        1.0 / (TAU * (self.r1 * self.r2 * self.c1 * self.c2).sqrt())
    }

    /// Q = √(R1R2C1C2)/(C2(R1 + R2)).
    pub fn q(&self) -> f64 {
        (self.r1 * self.r2 * self.c1 * self.c2).sqrt() / (self.c2 * (self.r1 + self.r2))
    }

    /// The closed-form H(s) = 1/(1 + s·C2(R1 + R2) + s²·R1R2C1C2) with an ideal op-amp.
    pub fn transfer(&self, s: Complex64) -> Complex64 {
        let b = self.c2 * (self.r1 + self.r2);
        let a = self.r1 * self.r2 * self.c1 * self.c2;
        (1.0 + s * b + s * s * a).inv()
    }

    /// The closed-form sensitivities of f0 and Q to R1, R2, C1 and C2 (module docs).
    pub fn sensitivities(&self) -> Vec<PartSensitivity> {
        let sum = self.r1 + self.r2;
        let entry =
            |reference: &str, q: f64| PartSensitivity { reference: reference.to_string(), f0: -0.5, q: Some(q) };
        vec![entry("R1", 0.5 - self.r1 / sum), entry("R2", 0.5 - self.r2 / sum), entry("C1", 0.5), entry("C2", -0.5)]
    }

    /// The high-frequency feedthrough |H| limit with a real op-amp of output resistance
    /// `output_ohms` (and the optional load), derived by hand:
    ///
    /// Far above f0 and above the op-amp's gain-bandwidth, C1 shorts node a to the output pin and
    /// C2 shorts the non-inverting input to ground, and the open-loop gain A(jω) → 0, so the
    /// op-amp's internal source is at 0 V behind R_o. The output pin then sees R1 from the input
    /// and, to ground, R2 (through C2), R_o and the load. KCL at the output:
    /// (V_in − V)/R1 = V·(1/R2 + (1 + A)/R_o + 1/R_L), so with A → 0
    ///
    /// H∞ = G1/(G1 + G2 + G_o + G_L), G = 1/R.
    ///
    /// With R_o = 0 the output is held at A/(1 + A)·V(p) → 0, so the limit is 0.
    pub fn feedthrough_limit(&self, output_ohms: f64, load_ohms: Option<f64>) -> f64 {
        if output_ohms <= 0.0 {
            return 0.0;
        }
        let g1 = 1.0 / self.r1;
        g1 / (g1 + 1.0 / self.r2 + 1.0 / output_ohms + load_ohms.map_or(0.0, |r| 1.0 / r))
    }

    /// Adds the section as section number `section` between nodes `input` and `output`.
    pub fn add_to(&self, design: &mut Design, section: usize, input: &str, output: &str, op_amp: &OpAmp) {
        let (a, p) = (node(section, "a"), node(section, "p"));
        push_resistor(design, &reference("R1", section), self.r1, input, &a);
        push_resistor(design, &reference("R2", section), self.r2, &a, &p);
        push_capacitor(design, &reference("C1", section), self.c1, &a, output);
        push_capacitor(design, &reference("C2", section), self.c2, &p, "0");
        add_follower(design, section, &p, output, op_amp);
    }
}

impl SallenKeyHighPass {
    /// Designs the section with equal capacitors `c`: R1 = 1/(2Q·ω0·C), R2 = 2Q/(ω0·C).
    ///
    /// # Errors
    /// [`ActiveError::BadFrequency`], [`ActiveError::BadQ`] or [`ActiveError::BadValue`].
    pub fn design(f0_hz: f64, q: f64, c: f64) -> Result<Self, ActiveError> {
        Self::resistors_for(f0_hz, q, c, c)
    }

    /// Designs the section for given capacitors: R1 = 1/(Q·ω0·(C1 + C2)), R2 = 1/(ω0²·R1·C1·C2).
    ///
    /// # Errors
    /// [`ActiveError::BadFrequency`], [`ActiveError::BadQ`] or [`ActiveError::BadValue`].
    pub fn resistors_for(f0_hz: f64, q: f64, c1: f64, c2: f64) -> Result<Self, ActiveError> {
        check_frequency("f0", f0_hz)?;
        check_q(q)?;
        check_value("capacitor C1", c1)?;
        check_value("capacitor C2", c2)?;
        let omega0 = TAU * f0_hz;
        let r1 = 1.0 / (q * omega0 * (c1 + c2));
        let r2 = 1.0 / (omega0 * omega0 * r1 * c1 * c2);
        check_results(&[("resistor R1", r1), ("resistor R2", r2)])?;
        Ok(Self { c1, c2, r1, r2 })
    }

    /// f0 = 1/(2π·√(R1R2C1C2)) in Hz.
    pub fn f0_hz(&self) -> f64 {
        1.0 / (TAU * (self.r1 * self.r2 * self.c1 * self.c2).sqrt())
    }

    /// Q = √(R1R2C1C2)/(R1(C1 + C2)).
    pub fn q(&self) -> f64 {
        (self.r1 * self.r2 * self.c1 * self.c2).sqrt() / (self.r1 * (self.c1 + self.c2))
    }

    /// The closed-form H(s) = s²R1R2C1C2/(s²R1R2C1C2 + s·R1(C1 + C2) + 1) with an ideal op-amp.
    pub fn transfer(&self, s: Complex64) -> Complex64 {
        let a = self.r1 * self.r2 * self.c1 * self.c2;
        let b = self.r1 * (self.c1 + self.c2);
        let top = s * s * a;
        top / (top + s * b + 1.0)
    }

    /// The closed-form sensitivities of f0 and Q to C1, C2, R1 and R2 (module docs).
    pub fn sensitivities(&self) -> Vec<PartSensitivity> {
        let sum = self.c1 + self.c2;
        let entry =
            |reference: &str, q: f64| PartSensitivity { reference: reference.to_string(), f0: -0.5, q: Some(q) };
        vec![entry("C1", 0.5 - self.c1 / sum), entry("C2", 0.5 - self.c2 / sum), entry("R1", -0.5), entry("R2", 0.5)]
    }

    /// Adds the section as section number `section` between nodes `input` and `output`.
    pub fn add_to(&self, design: &mut Design, section: usize, input: &str, output: &str, op_amp: &OpAmp) {
        let (a, p) = (node(section, "a"), node(section, "p"));
        push_capacitor(design, &reference("C1", section), self.c1, input, &a);
        push_capacitor(design, &reference("C2", section), self.c2, &a, &p);
        push_resistor(design, &reference("R1", section), self.r1, &a, output);
        push_resistor(design, &reference("R2", section), self.r2, &p, "0");
        add_follower(design, section, &p, output, op_amp);
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::active::{log_derivative, ActiveSection};
    use crate::mna::{AcSystem, Detail};

    /// The engine's H against the closed form at frequencies around f0.
    fn check_engine(section: ActiveSection, f0: f64) {
        let design = section.to_design(&OpAmp::Ideal, None);
        let (circuit, probe) = design.to_circuit().unwrap();
        let mut system = AcSystem::new(&circuit, &probe);
        for ratio in [0.01, 0.3, 0.9, 1.0, 1.1, 3.0, 100.0] {
            let f = f0 * ratio;
            let got = system.solve_at(f, Detail::Transfer).unwrap().transfer;
            let want = section.transfer(Complex64::new(0.0, TAU * f));
            assert!((got - want).norm() <= 1e-12 * want.norm(), "{section:?} at {f} Hz: {got} vs {want}");
        }
    }

    #[test]
    fn designs_meet_f0_and_q_and_match_the_engine() {
        for q in [0.3, 0.5, std::f64::consts::FRAC_1_SQRT_2, 1.3, 4.0] {
            let lp =
                SallenKeyLowPass::design(1234.0, q, 10e-9, SallenKeyLowPass::min_capacitor_ratio(q) * 1.7).unwrap();
            assert!((lp.f0_hz() / 1234.0 - 1.0).abs() < 1e-14 && (lp.q() / q - 1.0).abs() < 1e-14, "{lp:?}");
            assert!(lp.r1 >= lp.r2);
            check_engine(ActiveSection::SallenKeyLowPass(lp), 1234.0);
            let hp = SallenKeyHighPass::design(1234.0, q, 10e-9).unwrap();
            assert!((hp.f0_hz() / 1234.0 - 1.0).abs() < 1e-14 && (hp.q() / q - 1.0).abs() < 1e-14, "{hp:?}");
            check_engine(ActiveSection::SallenKeyHighPass(hp), 1234.0);
        }
    }

    #[test]
    fn the_minimum_ratio_gives_equal_resistors() {
        let lp = SallenKeyLowPass::design(1e3, 2.0, 1e-9, 16.0).unwrap();
        assert!((lp.r1 / lp.r2 - 1.0).abs() < 1e-12 && (lp.q() - 2.0).abs() < 1e-13);
    }

    #[test]
    fn sensitivities_match_finite_differences() {
        let lp = SallenKeyLowPass::design(1e3, 1.3, 4.7e-9, 9.0).unwrap();
        let hp = SallenKeyHighPass::resistors_for(1e3, 1.3, 4.7e-9, 2.2e-9).unwrap();
        let h = 1e-5;
        for s in lp.sensitivities() {
            let with = |x: f64| {
                let mut v = lp;
                match s.reference.as_str() {
                    "R1" => v.r1 = x,
                    "R2" => v.r2 = x,
                    "C1" => v.c1 = x,
                    _ => v.c2 = x,
                }
                v
            };
            let x0 = match s.reference.as_str() {
                "R1" => lp.r1,
                "R2" => lp.r2,
                "C1" => lp.c1,
                _ => lp.c2,
            };
            assert!((log_derivative(|x| with(x).f0_hz(), x0, h) - s.f0).abs() < 1e-8);
            assert!((log_derivative(|x| with(x).q(), x0, h) - s.q.unwrap()).abs() < 1e-8, "{s:?}");
        }
        for s in hp.sensitivities() {
            let with = |x: f64| {
                let mut v = hp;
                match s.reference.as_str() {
                    "R1" => v.r1 = x,
                    "R2" => v.r2 = x,
                    "C1" => v.c1 = x,
                    _ => v.c2 = x,
                }
                v
            };
            let x0 = match s.reference.as_str() {
                "R1" => hp.r1,
                "R2" => hp.r2,
                "C1" => hp.c1,
                _ => hp.c2,
            };
            assert!((log_derivative(|x| with(x).f0_hz(), x0, h) - s.f0).abs() < 1e-8);
            assert!((log_derivative(|x| with(x).q(), x0, h) - s.q.unwrap()).abs() < 1e-8, "{s:?}");
        }
    }

    #[test]
    fn bad_input_is_named() {
        let error = SallenKeyLowPass::design(1e3, 2.0, 1e-9, 10.0).unwrap_err();
        assert_eq!(error, ActiveError::RatioTooSmall { topology: "Sallen-Key", ratio: 10.0, q: 2.0, min_ratio: 16.0 });
        assert!(error.to_string().contains("ratio of 10") && error.to_string().contains("at least 16"), "{error}");
        assert!(SallenKeyLowPass::design(1e3, 0.0, 1e-9, 10.0).unwrap_err().to_string().contains("Q 0 "));
        assert!(SallenKeyLowPass::design(1e3, -1.0, 1e-9, 10.0).unwrap_err().to_string().contains("Q -1 "));
        assert!(SallenKeyHighPass::design(0.0, 0.7, 1e-9).unwrap_err().to_string().contains("f0 0 Hz"));
        assert!(SallenKeyHighPass::design(f64::NAN, 0.7, 1e-9).unwrap_err().to_string().contains("f0 NaN Hz"));
        assert!(SallenKeyHighPass::design(1e3, 0.7, -1e-9)
            .unwrap_err()
            .to_string()
            .contains("capacitor C1 -0.000000001"));
        // An f0 so high that R underflows to 0 is refused, not returned.
        assert!(SallenKeyHighPass::design(1e300, 0.7, 1e300).is_err());
    }
}
