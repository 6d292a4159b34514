//! Multiple-feedback (MFB) second-order sections, low-pass and high-pass, with passband gain −K:
//! design equations from f0, Q and K, the closed-form H(s), sensitivities, and the parts as a
//! [`Design`] fragment.
//!
//! # Source of the formulas
//! The MFB low-pass and high-pass forms and their coefficient equations are those of TI,
//! *Op Amps for Everyone* (R. Mancini, ed., 2002), ch. 16 "Active Filter Design Techniques",
//! written here **from memory** (we did not have the text at hand; its part numbering may differ
//! from ours). Each H(s) is derived below by nodal analysis in the ideal limit (virtual ground at
//! the inverting input: V(n) = 0 and no input current), and the tests check it against the MNA
//! engine and against `scipy.signal.freqs` of the standard second-order forms.
//!
//! # Low-pass ([`MultipleFeedbackLowPass`])
//! R1 from the input to node a, C1 from a to ground, R2 from a to the output (feedback), R3 from a
//! to the inverting input n, C2 from n to the output; the non-inverting input is grounded.
//! KCL at n with V(n) = 0: V_a/R3 = −sC2·V_out. KCL at a:
//! (V_in − V_a)/R1 = sC1·V_a + (V_a − V_out)/R2 + V_a/R3. Eliminating V_a:
//!
//! H(s) = −(R2/R1)/(1 + s·C2(R2 + R3 + R2R3/R1) + s²·R2R3C1C2), so K = R2/R1,
//! ω0 = 1/√(R2R3C1C2) and Q = √(R2R3C1C2)/(C2(R2 + R3 + R2R3/R1)).
//!
//! With R2·R3 = P = 1/(ω0²C1C2) and R2 + (1 + K)·R3 = S = 1/(Q·ω0·C2), R2 is a root of
//! x² − S·x + (1 + K)·P = 0, which is real only if **C1/C2 ≥ 4Q²(1 + K)**
//! ([`ActiveError::RatioTooSmall`] otherwise). R2 takes the smaller root (as TI does, from
//! memory), R3 = P/R2 and R1 = R2/K. Sensitivities, with D = R2 + R3 + R2R3/R1: S^{f0} = 0 for R1
//! and −1/2 for R2, R3, C1, C2; S_{R1}^{Q} = (R2R3/R1)/D, S_{R2}^{Q} = 1/2 − (R2 + R2R3/R1)/D,
//! S_{R3}^{Q} = 1/2 − (R3 + R2R3/R1)/D, S_{C1}^{Q} = 1/2, S_{C2}^{Q} = −1/2.
//!
//! # High-pass ([`MultipleFeedbackHighPass`])
//! C1 from the input to node a, R1 from a to ground, C2 from a to the output (feedback), C3 from a
//! to the inverting input n, R2 from n to the output. KCL at n: sC3·V_a = −V_out/R2. KCL at a:
//! (V_in − V_a)sC1 = V_a/R1 + (V_a − V_out)sC2 + sC3·V_a. Eliminating V_a:
//!
//! H(s) = −s²R1R2C1C3/(s²R1R2C2C3 + s·R1(C1 + C2 + C3) + 1), so K = C1/C2,
//! ω0 = 1/√(R1R2C2C3) and Q = √(R1R2C2C3)/(R1(C1 + C2 + C3)).
//!
//! Any Q is reachable by the resistor ratio. The usual choice C1 = C3 = C, C2 = C/K (common
//! practice) gives R1 = 1/(Q·ω0·(C1 + C2 + C3)) and R2 = 1/(ω0²·R1·C2·C3). Sensitivities, with
//! Σ = C1 + C2 + C3: S^{f0} = 0 for C1 and −1/2 for C2, C3, R1, R2; S_{C1}^{Q} = −C1/Σ,
//! S_{C2}^{Q} = 1/2 − C2/Σ, S_{C3}^{Q} = 1/2 − C3/Σ, S_{R1}^{Q} = −1/2, S_{R2}^{Q} = 1/2.
//!
//! Local references are `R1`…, `C1`… and the op-amp `U`; in a design they carry the section
//! number ([`crate::active::reference`]).

use std::f64::consts::TAU;

use num_complex::Complex64;

use crate::active::{
    add_inverting, check_frequency, check_q, check_results, check_value, node, push_capacitor, push_resistor,
    reference, ActiveError, OpAmp, PartSensitivity,
};
use crate::design::Design;

/// A multiple-feedback low-pass section of gain −R2/R1 (see the module docs for the circuit).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MultipleFeedbackLowPass {
    /// Input resistor (input to node a), Ω.
    pub r1: f64,
    /// Feedback resistor (node a to the output), Ω.
    pub r2: f64,
    /// Resistor from node a to the inverting input, Ω.
    pub r3: f64,
    /// Capacitor from node a to ground, F.
    pub c1: f64,
    /// Feedback capacitor (inverting input to the output), F.
    pub c2: f64,
}

/// A multiple-feedback high-pass section of gain −C1/C2 (see the module docs for the circuit).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MultipleFeedbackHighPass {
    /// Input capacitor (input to node a), F.
    pub c1: f64,
    /// Feedback capacitor (node a to the output), F.
    pub c2: f64,
    /// Capacitor from node a to the inverting input, F.
    pub c3: f64,
    /// Resistor from node a to ground, Ω.
    pub r1: f64,
    /// Feedback resistor (inverting input to the output), Ω.
    pub r2: f64,
}

impl MultipleFeedbackLowPass {
    /// The smallest C1/C2 that gives `q` at gain magnitude `gain`: 4Q²(1 + K).
    pub fn min_capacitor_ratio(q: f64, gain: f64) -> f64 {
        4.0 * q * q * (1.0 + gain)
    }

    /// Designs the section for `f0_hz`, `q` and gain −`gain`, with feedback capacitor `c2` and
    /// grounded capacitor `c1 = ratio·c2`.
    ///
    /// # Errors
    /// [`ActiveError::BadFrequency`], [`ActiveError::BadQ`], [`ActiveError::BadValue`] (gain,
    /// capacitor, ratio, or a result that overflows), or [`ActiveError::RatioTooSmall`] when
    /// ratio < 4Q²(1 + K).
    pub fn design(f0_hz: f64, q: f64, gain: f64, c2: f64, ratio: f64) -> Result<Self, ActiveError> {
        check_frequency("f0", f0_hz)?;
        check_q(q)?;
        check_value("gain K", gain)?;
        check_value("capacitor C2", c2)?;
        check_value("capacitor ratio C1/C2", ratio)?;
        let min_ratio = Self::min_capacitor_ratio(q, gain);
        if ratio < min_ratio * (1.0 - 1e-12) {
            return Err(ActiveError::RatioTooSmall { topology: "multiple-feedback", ratio, q, min_ratio });
        }
        let c1 = ratio * c2;
        let omega0 = TAU * f0_hz;
        let sum = 1.0 / (q * omega0 * c2);
        let product = 1.0 / (omega0 * omega0 * c1 * c2);
        // The larger root without cancellation, then the smaller from the product (1 + K)·P.
        let larger = 0.5 * sum * (1.0 + (1.0 - min_ratio / ratio).max(0.0).sqrt());
        let r2 = (1.0 + gain) * product / larger;
        let r3 = product / r2;
        let r1 = r2 / gain;
        check_results(&[("capacitor C1", c1), ("resistor R1", r1), ("resistor R2", r2), ("resistor R3", r3)])?;
        Ok(Self { r1, r2, r3, c1, c2 })
    }

    /// The gain magnitude K = R2/R1.
    pub fn gain(&self) -> f64 {
        self.r2 / self.r1
    }

    /// f0 = 1/(2π·√(R2R3C1C2)) in Hz.
    pub fn f0_hz(&self) -> f64 {
        1.0 / (TAU * (self.r2 * self.r3 * self.c1 * self.c2).sqrt())
    }

    /// Q = √(R2R3C1C2)/(C2(R2 + R3 + R2R3/R1)).
    pub fn q(&self) -> f64 {
        (self.r2 * self.r3 * self.c1 * self.c2).sqrt() / (self.c2 * self.damping_sum())
    }

    /// The closed-form H(s) = −(R2/R1)/(1 + s·C2·D + s²·R2R3C1C2) with an ideal op-amp.
    pub fn transfer(&self, s: Complex64) -> Complex64 {
        let b = self.c2 * self.damping_sum();
        let a = self.r2 * self.r3 * self.c1 * self.c2;
        -self.gain() / (1.0 + s * b + s * s * a)
    }

    /// The closed-form sensitivities of f0 and Q to every part (module docs).
    pub fn sensitivities(&self) -> Vec<PartSensitivity> {
        let d = self.damping_sum();
        let cross = self.r2 * self.r3 / self.r1;
        let entry =
            |reference: &str, f0: f64, q: f64| PartSensitivity { reference: reference.to_string(), f0, q: Some(q) };
        vec![
            entry("R1", 0.0, cross / d),
            entry("R2", -0.5, 0.5 - (self.r2 + cross) / d),
            entry("R3", -0.5, 0.5 - (self.r3 + cross) / d),
            entry("C1", -0.5, 0.5),
            entry("C2", -0.5, -0.5),
        ]
    }

    /// Adds the section as section number `section` between nodes `input` and `output`.
    pub fn add_to(&self, design: &mut Design, section: usize, input: &str, output: &str, op_amp: &OpAmp) {
        let (a, n) = (node(section, "a"), node(section, "n"));
        push_resistor(design, &reference("R1", section), self.r1, input, &a);
        push_resistor(design, &reference("R2", section), self.r2, &a, output);
        push_resistor(design, &reference("R3", section), self.r3, &a, &n);
        push_capacitor(design, &reference("C1", section), self.c1, &a, "0");
        push_capacitor(design, &reference("C2", section), self.c2, &n, output);
        add_inverting(design, section, &n, output, op_amp);
    }

    /// D = R2 + R3 + R2R3/R1.
    fn damping_sum(&self) -> f64 {
        self.r2 + self.r3 + self.r2 * self.r3 / self.r1
    }
}

impl MultipleFeedbackHighPass {
    /// Designs the section for `f0_hz`, `q` and gain −`gain` with C1 = C3 = `c` and C2 = c/K.
    ///
    /// # Errors
    /// [`ActiveError::BadFrequency`], [`ActiveError::BadQ`] or [`ActiveError::BadValue`].
    pub fn design(f0_hz: f64, q: f64, gain: f64, c: f64) -> Result<Self, ActiveError> {
        check_value("gain K", gain)?;
        check_value("capacitor C1", c)?;
        Self::resistors_for(f0_hz, q, c, c / gain, c)
    }

    /// Designs the section for given capacitors: R1 = 1/(Q·ω0·(C1 + C2 + C3)),
    /// R2 = 1/(ω0²·R1·C2·C3). The gain is then −C1/C2.
    ///
    /// # Errors
    /// [`ActiveError::BadFrequency`], [`ActiveError::BadQ`] or [`ActiveError::BadValue`].
    pub fn resistors_for(f0_hz: f64, q: f64, c1: f64, c2: f64, c3: f64) -> Result<Self, ActiveError> {
        check_frequency("f0", f0_hz)?;
        check_q(q)?;
        check_value("capacitor C1", c1)?;
        check_value("capacitor C2", c2)?;
        check_value("capacitor C3", c3)?;
        let omega0 = TAU * f0_hz;
        let r1 = 1.0 / (q * omega0 * (c1 + c2 + c3));
        let r2 = 1.0 / (omega0 * omega0 * r1 * c2 * c3);
        check_results(&[("resistor R1", r1), ("resistor R2", r2)])?;
        Ok(Self { c1, c2, c3, r1, r2 })
    }

    /// The gain magnitude K = C1/C2.
    pub fn gain(&self) -> f64 {
        self.c1 / self.c2
    }

    /// f0 = 1/(2π·√(R1R2C2C3)) in Hz.
    pub fn f0_hz(&self) -> f64 {
        1.0 / (TAU * (self.r1 * self.r2 * self.c2 * self.c3).sqrt())
    }

    /// Q = √(R1R2C2C3)/(R1(C1 + C2 + C3)).
    pub fn q(&self) -> f64 {
        (self.r1 * self.r2 * self.c2 * self.c3).sqrt() / (self.r1 * (self.c1 + self.c2 + self.c3))
    }

    /// The closed-form H(s) = −s²R1R2C1C3/(s²R1R2C2C3 + s·R1(C1 + C2 + C3) + 1) with an ideal
    /// op-amp.
    pub fn transfer(&self, s: Complex64) -> Complex64 {
        let a = self.r1 * self.r2 * self.c2 * self.c3;
        let b = self.r1 * (self.c1 + self.c2 + self.c3);
        -(s * s * self.r1 * self.r2 * self.c1 * self.c3) / (s * s * a + s * b + 1.0)
    }

    /// The closed-form sensitivities of f0 and Q to every part (module docs).
    pub fn sensitivities(&self) -> Vec<PartSensitivity> {
        let sum = self.c1 + self.c2 + self.c3;
        let entry =
            |reference: &str, f0: f64, q: f64| PartSensitivity { reference: reference.to_string(), f0, q: Some(q) };
        vec![
            entry("C1", 0.0, -self.c1 / sum),
            entry("C2", -0.5, 0.5 - self.c2 / sum),
            entry("C3", -0.5, 0.5 - self.c3 / sum),
            entry("R1", -0.5, -0.5),
            entry("R2", -0.5, 0.5),
        ]
    }

    /// Adds the section as section number `section` between nodes `input` and `output`.
    pub fn add_to(&self, design: &mut Design, section: usize, input: &str, output: &str, op_amp: &OpAmp) {
        let (a, n) = (node(section, "a"), node(section, "n"));
        push_capacitor(design, &reference("C1", section), self.c1, input, &a);
        push_capacitor(design, &reference("C2", section), self.c2, &a, output);
        push_capacitor(design, &reference("C3", section), self.c3, &a, &n);
        push_resistor(design, &reference("R1", section), self.r1, &a, "0");
        push_resistor(design, &reference("R2", section), self.r2, &n, output);
        add_inverting(design, section, &n, output, op_amp);
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::active::{log_derivative, ActiveSection};
    use crate::mna::{AcSystem, Detail};

    fn check_engine(section: ActiveSection, f0: f64) {
        let design = section.to_design(&OpAmp::Ideal, Some(2e3));
        let (circuit, probe) = design.to_circuit().unwrap();
        let mut system = AcSystem::new(&circuit, &probe);
        for ratio in [0.0, 0.01, 0.3, 0.9, 1.0, 1.1, 3.0, 100.0] {
            let f = f0 * ratio;
            let Ok(solution) = system.solve_at(f, Detail::Transfer) else {
                // Only the high-pass may be singular at DC (node n floats between capacitors).
                assert!(ratio == 0.0 && matches!(section, ActiveSection::MultipleFeedbackHighPass(_)));
                continue;
            };
            let want = section.transfer(Complex64::new(0.0, TAU * f));
            let got = solution.transfer;
            assert!((got - want).norm() <= 1e-12 * want.norm().max(1e-300), "{section:?} at {f} Hz: {got} vs {want}");
        }
    }

    #[test]
    fn designs_meet_f0_q_and_gain_and_match_the_engine() {
        for gain in [1.0, 2.5] {
            for q in [0.3, 0.5, std::f64::consts::FRAC_1_SQRT_2, 1.3, 4.0] {
                let ratio = MultipleFeedbackLowPass::min_capacitor_ratio(q, gain) * 1.3;
                let lp = MultipleFeedbackLowPass::design(2500.0, q, gain, 1e-9, ratio).unwrap();
                assert!((lp.f0_hz() / 2500.0 - 1.0).abs() < 1e-14, "{lp:?}");
                assert!((lp.q() / q - 1.0).abs() < 1e-14 && (lp.gain() / gain - 1.0).abs() < 1e-15, "{lp:?}");
                check_engine(ActiveSection::MultipleFeedbackLowPass(lp), 2500.0);
                let hp = MultipleFeedbackHighPass::design(2500.0, q, gain, 10e-9).unwrap();
                assert!((hp.f0_hz() / 2500.0 - 1.0).abs() < 1e-14, "{hp:?}");
                assert!((hp.q() / q - 1.0).abs() < 1e-14 && (hp.gain() / gain - 1.0).abs() < 1e-15, "{hp:?}");
                check_engine(ActiveSection::MultipleFeedbackHighPass(hp), 2500.0);
            }
        }
    }

    #[test]
    fn the_ideal_op_amp_holds_a_virtual_ground() {
        // The unit self-sensing VCVS makes V(n) exactly 0 (up to rounding of the solve).
        let lp = MultipleFeedbackLowPass::design(1e3, std::f64::consts::FRAC_1_SQRT_2, 1.0, 1e-9, 4.0).unwrap();
        let design = ActiveSection::MultipleFeedbackLowPass(lp).to_design(&OpAmp::Ideal, None);
        let (circuit, probe) = design.to_circuit().unwrap();
        let solution = AcSystem::new(&circuit, &probe).solve_at(900.0, Detail::Full).unwrap();
        let n = circuit.node("s1.n").unwrap();
        assert!(solution.node_voltages[n.index()].norm() < 1e-15, "{}", solution.node_voltages[n.index()]);
    }

    #[test]
    fn sensitivities_match_finite_differences() {
        let lp = MultipleFeedbackLowPass::design(1e3, 1.1, 1.7, 2.2e-9, 20.0).unwrap();
        let hp = MultipleFeedbackHighPass::resistors_for(1e3, 1.1, 10e-9, 4.7e-9, 6.8e-9).unwrap();
        let h = 1e-5;
        for s in lp.sensitivities() {
            let with = |x: f64| {
                let mut v = lp;
                match s.reference.as_str() {
                    "R1" => v.r1 = x,
                    "R2" => v.r2 = x,
                    "R3" => v.r3 = x,
                    "C1" => v.c1 = x,
                    _ => v.c2 = x,
                }
                v
            };
            let x0 = match s.reference.as_str() {
                "R1" => lp.r1,
                "R2" => lp.r2,
                "R3" => lp.r3,
                "C1" => lp.c1,
                _ => lp.c2,
            };
            assert!((log_derivative(|x| with(x).f0_hz(), x0, h) - s.f0).abs() < 1e-8, "{s:?}");
            assert!((log_derivative(|x| with(x).q(), x0, h) - s.q.unwrap()).abs() < 1e-8, "{s:?}");
        }
        for s in hp.sensitivities() {
            let with = |x: f64| {
                let mut v = hp;
                match s.reference.as_str() {
                    "C1" => v.c1 = x,
                    "C2" => v.c2 = x,
                    "C3" => v.c3 = x,
                    "R1" => v.r1 = x,
                    _ => v.r2 = x,
                }
                v
            };
            let x0 = match s.reference.as_str() {
                "C1" => hp.c1,
                "C2" => hp.c2,
                "C3" => hp.c3,
                "R1" => hp.r1,
                _ => hp.r2,
            };
            assert!((log_derivative(|x| with(x).f0_hz(), x0, h) - s.f0).abs() < 1e-8, "{s:?}");
            assert!((log_derivative(|x| with(x).q(), x0, h) - s.q.unwrap()).abs() < 1e-8, "{s:?}");
        }
    }

    #[test]
    fn bad_input_is_named() {
        let error = MultipleFeedbackLowPass::design(1e3, 1.0, 1.0, 1e-9, 7.0).unwrap_err();
        assert_eq!(
            error,
            ActiveError::RatioTooSmall { topology: "multiple-feedback", ratio: 7.0, q: 1.0, min_ratio: 8.0 }
        );
        assert!(error.to_string().contains("at least 8"), "{error}");
        assert!(MultipleFeedbackLowPass::design(1e3, 1.0, 0.0, 1e-9, 70.0)
            .unwrap_err()
            .to_string()
            .contains("gain K 0"));
        assert!(MultipleFeedbackHighPass::design(-3.0, 1.0, 1.0, 1e-9).unwrap_err().to_string().contains("f0 -3 Hz"));
        assert!(MultipleFeedbackHighPass::design(1e3, f64::INFINITY, 1.0, 1e-9)
            .unwrap_err()
            .to_string()
            .contains("Q inf"));
    }
}
