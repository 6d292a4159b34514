//! Series–parallel reduction: a circuit that is a ladder of two-terminal branches, solved by
//! back-substitution in O(parts) per frequency with the exact frequency derivative.
//!
//! # When it applies
//! The stimulus is a voltage source (with its series resistance) from a node to ground, the
//! output is a node against ground, every other part is a resistor, capacitor (with ESR) or
//! inductor (with DCR), and repeatedly merging parallel branches, merging the two branches at an
//! internal node that has exactly two, and dropping branches that carry no current (a dangling
//! branch or a self-loop) leaves a chain: the source node, then nodes joined one after another by a
//! series branch, each with at most one shunt branch to ground, with the output on the chain. Every
//! passive ladder the fitting produces is of this kind (LC and RC ladders, RLC sections, loads with
//! R ∥ C). Anything else (controlled sources, extra sources, bridges) gives `None`, and the caller
//! uses the MNA solution, which is exact for any circuit.
//!
//! # Method
//! Back-substitution along the chain (the classical ladder method; e.g. Van Valkenburg,
//! *Network Analysis*, 3rd ed., ch. on ladder networks; from memory): set V = 1 at the far end,
//! walk toward the source adding each shunt's current I += Y·V and each series branch's drop
//! V += Z·I, and finish with the EMF E = V + Rs·I at the source, so H = V(out)/E. Every step is
//! linear, so carrying each quantity with its derivative d/dω (forward-mode differentiation:
//! d(ab) = a′b + ab′, d(1/z) = −z′/z²) gives dH/dω exactly, and with it the group delay.
//! The work per frequency is a few complex multiplications per part, against a banded LU and two
//! triangular solves for the MNA path; the tolerance analysis uses it for its trials.
//!
//! At ω = 0 a series capacitor's impedance is infinite, so [`Reduction::solve`] declines DC (and
//! any point whose arithmetic overflows) and the caller solves that point by MNA.

use crate::circuit::{Circuit, ElementKind};
use crate::lanes::{Lane, LaneComplex, LaneDual, LANES};
use crate::mna::Probe;
use num_complex::Complex64;

/// A circuit reduced to a chain of series and shunt branches (see the module doc).
#[derive(Debug, Clone, PartialEq)]
pub struct Reduction {
    /// The chain from the far end toward the source: each node's shunt branch (if any) and the
    /// series branch from it toward the source (none for the source node itself).
    steps: Vec<Step>,
    /// Index into `steps` of the output node.
    output_step: usize,
    /// The source's series resistance in Ω.
    source_ohms: f64,
    /// The parasitic of each element: ESR of a capacitor, DCR of an inductor, else 0.
    parasitic: Vec<f64>,
    /// The kind of each element: 0 resistor, 1 capacitor, 2 inductor, 3 other.
    kind: Vec<u8>,
}

#[derive(Debug, Clone, PartialEq)]
struct Step {
    shunt: Option<Branch>,
    series: Option<Branch>,
    /// The shunt as a plain sum of ideal capacitors (true) and resistors (false), where it is one:
    /// the common case (a shunt C, or the last C in parallel with the load), summed inline.
    shunt_sum: Option<Vec<(bool, usize)>>,
}

/// A two-terminal branch as a series–parallel expression over element indices.
#[derive(Debug, Clone, PartialEq)]
enum Branch {
    Leaf(usize),
    Series(Vec<Branch>),
    Parallel(Vec<Branch>),
}

impl Reduction {
    /// Reduces `circuit` as measured by `probe`, or `None` where it is not a ladder of
    /// two-terminal branches (see the module doc).
    pub fn new(circuit: &Circuit, probe: &Probe) -> Option<Reduction> {
        let elements = circuit.elements();
        let stimulus = &elements[probe.stimulus];
        let source_ohms = match stimulus.kind {
            ElementKind::VoltageSource { series_resistance, .. } => series_resistance,
            _ => return None,
        };
        let (plus, minus) = stimulus.nodes;
        if !minus.is_ground() || plus.is_ground() {
            return None;
        }
        let (out, out_ref) = probe.output;
        if !out_ref.is_ground() || out.is_ground() {
            return None;
        }
        let mut branches: Vec<(usize, usize, Branch)> = Vec::new();
        let mut parasitic = vec![0.0; elements.len()];
        let mut kind = vec![3u8; elements.len()];
        for (index, element) in elements.iter().enumerate() {
            if index == probe.stimulus {
                continue;
            }
            match element.kind {
                ElementKind::Resistor { .. } => kind[index] = 0,
                ElementKind::Capacitor { esr, .. } => {
                    kind[index] = 1;
                    parasitic[index] = esr;
                }
                ElementKind::Inductor { dcr, .. } => {
                    kind[index] = 2;
                    parasitic[index] = dcr;
                }
                _ => return None,
            }
            branches.push((element.nodes.0.index(), element.nodes.1.index(), Branch::Leaf(index)));
        }
        let (source, output) = (plus.index(), out.index());
        let protected = |node: usize| node == 0 || node == source || node == output;
        loop {
            let mut changed = false;
            // Branches that carry no current: self-loops, and dangling ones.
            branches.retain(|(a, b, _)| a != b);
            let degree = |branches: &[(usize, usize, Branch)], node: usize| {
                branches.iter().filter(|(a, b, _)| *a == node || *b == node).count()
            };
            let dangling: Vec<usize> = branches
                .iter()
                .enumerate()
                .filter(|(_, (a, b, _))| {
                    (!protected(*a) && degree(&branches, *a) == 1) || (!protected(*b) && degree(&branches, *b) == 1)
                })
                .map(|(i, _)| i)
                .collect();
            if !dangling.is_empty() {
                for i in dangling.into_iter().rev() {
                    branches.remove(i);
                }
                continue;
            }
            // Parallel branches.
            'parallel: for i in 0..branches.len() {
                for j in i + 1..branches.len() {
                    let same = |x: &(usize, usize, Branch), y: &(usize, usize, Branch)| {
                        (x.0 == y.0 && x.1 == y.1) || (x.0 == y.1 && x.1 == y.0)
                    };
                    if same(&branches[i], &branches[j]) {
                        let (_, _, second) = branches.remove(j);
                        let first = std::mem::replace(&mut branches[i].2, Branch::Parallel(Vec::new()));
                        branches[i].2 = Branch::Parallel(vec![first, second]);
                        changed = true;
                        break 'parallel;
                    }
                }
            }
            if changed {
                continue;
            }
            // Series branches at an internal node of degree two.
            let nodes: Vec<usize> = branches.iter().flat_map(|(a, b, _)| [*a, *b]).collect();
            if let Some(&node) = nodes.iter().find(|&&n| !protected(n) && degree(&branches, n) == 2) {
                let mut at: Vec<usize> =
                    (0..branches.len()).filter(|&i| branches[i].0 == node || branches[i].1 == node).collect();
                let j = at.pop().expect("degree two");
                let i = at.pop().expect("degree two");
                let (a2, b2, second) = branches.remove(j);
                let (a1, b1, first) = branches.remove(i);
                let far1 = if a1 == node { b1 } else { a1 };
                let far2 = if a2 == node { b2 } else { a2 };
                branches.push((far1, far2, Branch::Series(vec![first, second])));
                continue;
            }
            break;
        }
        // What is left must be a chain from the source node, with shunts to ground.
        let mut shunt = std::collections::HashMap::new();
        let mut series: Vec<(usize, usize, Branch)> = Vec::new();
        for (a, b, branch) in branches {
            if a == 0 || b == 0 {
                let node = if a == 0 { b } else { a };
                if shunt.insert(node, branch).is_some() {
                    return None; // parallel merging leaves at most one
                }
            } else {
                series.push((a, b, branch));
            }
        }
        let mut chain = vec![source];
        let mut series_to_next: Vec<Branch> = Vec::new();
        let mut current = source;
        let mut previous = usize::MAX;
        loop {
            let next: Vec<usize> = (0..series.len())
                .filter(|&i| {
                    let (a, b, _) = &series[i];
                    (*a == current && *b != previous) || (*b == current && *a != previous)
                })
                .collect();
            match next.len() {
                0 => break,
                1 => {
                    let (a, b, branch) = series.remove(next[0]);
                    let other = if a == current { b } else { a };
                    if chain.contains(&other) {
                        return None; // a loop
                    }
                    previous = current;
                    current = other;
                    chain.push(other);
                    series_to_next.push(branch);
                }
                _ => return None, // a branch point: not a chain
            }
        }
        if !series.is_empty() || shunt.keys().any(|n| !chain.contains(n)) {
            return None;
        }
        let output_position = chain.iter().position(|&n| n == output)?;
        // Steps from the far end toward the source.
        let count = chain.len();
        let mut steps = Vec::with_capacity(count);
        for position in (0..count).rev() {
            let shunt = shunt.remove(&chain[position]);
            let leaf = |b: &Branch| match b {
                Branch::Leaf(i) if kind[*i] == 1 && parasitic[*i] == 0.0 => Some((true, *i)),
                Branch::Leaf(i) if kind[*i] == 0 => Some((false, *i)),
                _ => None,
            };
            let shunt_sum = match &shunt {
                Some(Branch::Parallel(parts)) => parts.iter().map(leaf).collect::<Option<Vec<_>>>(),
                Some(b) => leaf(b).map(|l| vec![l]),
                None => None,
            };
            steps.push(Step {
                shunt,
                series: if position > 0 { Some(series_to_next[position - 1].clone()) } else { None },
                shunt_sum,
            });
        }
        Some(Reduction { steps, output_step: count - 1 - output_position, source_ohms, parasitic, kind })
    }

    /// H = V(out)/EMF and dH/dω at angular frequency `omega` (rad/s, > 0), with `values[i]` the
    /// primary value of element i (Ω, F or H; parasitics as in the circuit). `None` at ω ≤ 0 or
    /// where the arithmetic does not give a finite result.
    ///
    /// # Panics
    /// If `values` is shorter than the circuit's element list.
    pub fn solve(&self, omega: f64, values: &[f64]) -> Option<(Complex64, Complex64)> {
        if !(omega > 0.0 && omega.is_finite()) {
            return None;
        }
        let (h, dh) = self.solve_lanes(&[omega; LANES], values);
        let (h, dh) = (Complex64::new(h.re[0], h.im[0]), Complex64::new(dh.re[0], dh.im[0]));
        let finite = |z: Complex64| z.re.is_finite() && z.im.is_finite();
        (finite(h) && finite(dh)).then_some((h, dh))
    }

    /// H and dH/dω at [`LANES`] angular frequencies at once (rad/s), written lane by lane so that
    /// it runs as vector instructions ([`crate::lanes`]): H in the first result and
    /// dH/dω in the second, per lane. Nothing is declined here: the caller must treat a lane whose
    /// ω is not positive and finite, or whose H or H′ is not finite, as [`Reduction::solve`]
    /// treats a declined point.
    ///
    /// # Panics
    /// If `values` is shorter than the circuit's element list.
    #[inline(always)]
    pub fn solve_lanes(&self, omega: &Lane, values: &[f64]) -> (LaneComplex, LaneComplex) {
        let (v_out, emf) = self.solve_lanes_parts(omega, values);
        let h = v_out.mul(emf.inv());
        (h.v, h.d)
    }

    /// The two parts of [`Reduction::solve_lanes`]'s H = V_out/E with their derivatives d/dω:
    /// the output voltage V_out and the source EMF E that drives it, for a unit voltage at the
    /// load end of the ladder. For callers that divide once for several quotients.
    #[inline(always)]
    pub fn solve_lanes_parts(&self, omega: &Lane, values: &[f64]) -> (LaneDual, LaneDual) {
        let each = |f: &dyn Fn(usize) -> f64| -> Lane { std::array::from_fn(f) };
        let mut v = LaneDual::constant(LaneComplex::splat(1.0, 0.0));
        let mut i = LaneDual::constant(LaneComplex::ZERO);
        let mut v_out = v;
        for (k, step) in self.steps.iter().enumerate() {
            match (&step.shunt_sum, &step.shunt) {
                (Some(sum), _) => {
                    // Y = G + jωC and Y′ = jC with G = Σ 1/R and C = Σ C over the shunt's parts.
                    let (mut g, mut c) = (0.0, 0.0);
                    for &(capacitor, index) in sum {
                        if capacitor {
                            c += values[index];
                        } else {
                            g += 1.0 / values[index];
                        }
                    }
                    let y = LaneComplex { re: [g; LANES], im: each(&|j| omega[j] * c) };
                    // v·Y′ = v·jC.
                    let v_dy = LaneComplex { re: each(&|j| -v.v.im[j] * c), im: each(&|j| v.v.re[j] * c) };
                    i.d = i.d.add(v.d.mul(y)).add(v_dy);
                    i.v = i.v.add(v.v.mul(y));
                }
                (None, Some(shunt)) => i = i.add(v.mul(self.admittance_lanes(shunt, omega, values))),
                (None, None) => {}
            }
            if k == self.output_step {
                v_out = v;
            }
            match &step.series {
                Some(Branch::Leaf(index)) if self.kind[*index] == 2 => {
                    let (l, r) = (values[*index], self.parasitic[*index]);
                    let z = LaneComplex { re: [r; LANES], im: each(&|j| omega[j] * l) };
                    // v′ += jL·i + (r + jωL)·i′; v += (r + jωL)·i.
                    let jl_i = LaneComplex { re: each(&|j| -l * i.v.im[j]), im: each(&|j| l * i.v.re[j]) };
                    v.d = v.d.add(jl_i).add(z.mul(i.d));
                    v.v = v.v.add(z.mul(i.v));
                }
                Some(Branch::Leaf(index)) if self.kind[*index] == 0 => {
                    let r = [values[*index]; LANES];
                    v.v = v.v.add(i.v.scale(r));
                    v.d = v.d.add(i.d.scale(r));
                }
                Some(series) => v = v.add(self.impedance_lanes(series, omega, values).mul(i)),
                None => {}
            }
        }
        let emf = v.add(i.scale([self.source_ohms; LANES]));
        (v_out, emf)
    }

    fn impedance_lanes(&self, branch: &Branch, omega: &Lane, values: &[f64]) -> LaneDual {
        match branch {
            Branch::Leaf(index) => {
                let (value, r) = (values[*index], self.parasitic[*index]);
                match self.kind[*index] {
                    0 => LaneDual::constant(LaneComplex::splat(value, 0.0)),
                    // r + 1/(jωC) = r − j/(ωC); d/dω = j/(ω²C).
                    1 => LaneDual {
                        v: LaneComplex { re: [r; LANES], im: std::array::from_fn(|j| -1.0 / (omega[j] * value)) },
                        d: LaneComplex {
                            re: [0.0; LANES],
                            im: std::array::from_fn(|j| 1.0 / (omega[j] * omega[j] * value)),
                        },
                    },
                    // r + jωL; d/dω = jL.
                    _ => LaneDual {
                        v: LaneComplex { re: [r; LANES], im: std::array::from_fn(|j| omega[j] * value) },
                        d: LaneComplex::splat(0.0, value),
                    },
                }
            }
            Branch::Series(parts) => parts
                .iter()
                .map(|p| self.impedance_lanes(p, omega, values))
                .fold(LaneDual::constant(LaneComplex::ZERO), LaneDual::add),
            Branch::Parallel(_) => self.admittance_lanes(branch, omega, values).inv(),
        }
    }

    fn admittance_lanes(&self, branch: &Branch, omega: &Lane, values: &[f64]) -> LaneDual {
        match branch {
            Branch::Leaf(index) if self.kind[*index] == 1 && self.parasitic[*index] == 0.0 => {
                // An ideal capacitor's admittance jωC, finite at every frequency.
                let c = values[*index];
                LaneDual {
                    v: LaneComplex { re: [0.0; LANES], im: std::array::from_fn(|j| omega[j] * c) },
                    d: LaneComplex::splat(0.0, c),
                }
            }
            Branch::Leaf(index) if self.kind[*index] == 0 => {
                LaneDual::constant(LaneComplex::splat(1.0 / values[*index], 0.0))
            }
            Branch::Parallel(parts) => parts
                .iter()
                .map(|p| self.admittance_lanes(p, omega, values))
                .fold(LaneDual::constant(LaneComplex::ZERO), LaneDual::add),
            _ => self.impedance_lanes(branch, omega, values).inv(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::circuit::CircuitBuilder;
    use crate::mna::{AcSystem, Detail};
    use std::f64::consts::PI;

    fn values(circuit: &Circuit) -> Vec<f64> {
        circuit.elements().iter().map(|e| e.kind.primary_value()).collect()
    }

    /// The reduction against the engine's MNA solution at log-spaced frequencies.
    fn check(b: &CircuitBuilder, output: &str) -> Reduction {
        let circuit = b.build().unwrap();
        let probe = Probe::new(&circuit, "V1", output, "0").unwrap();
        let reduction = Reduction::new(&circuit, &probe).expect("a ladder");
        let mut system = AcSystem::new(&circuit, &probe);
        let v = values(&circuit);
        for k in 0..=60 {
            let f = 10f64.powf(1.0 + 6.0 * k as f64 / 60.0);
            let exact = system.solve_at(f, Detail::Transfer).unwrap();
            let (h, dh) = reduction.solve(2.0 * PI * f, &v).unwrap();
            assert!(
                (h - exact.transfer).norm() <= 1e-12 * exact.transfer.norm(),
                "H at {f} Hz: {h} vs {}",
                exact.transfer
            );
            let scale = exact.transfer_derivative.norm() + exact.transfer.norm() / (2.0 * PI * f);
            assert!((dh - exact.transfer_derivative).norm() <= 1e-10 * scale, "H′ at {f} Hz");
        }
        reduction
    }

    #[test]
    fn doubly_terminated_lc_ladder() {
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "n1", "0", 1.0, 50.0)
            .capacitor("C1", "n1", "0", 3e-9)
            .inductor("L2", "n1", "n2", 16e-6)
            .capacitor("C3", "n2", "0", 6e-9)
            .add("L4", ElementKind::Inductor { inductance: 16e-6, dcr: 0.3 }, "n2", "n3")
            .add("C5", ElementKind::Capacitor { capacitance: 3e-9, esr: 0.05 }, "n3", "0")
            .resistor("RL", "n3", "0", 50.0);
        check(&b, "n3");
    }

    #[test]
    fn tanks_traps_and_an_output_inside_the_chain() {
        // A series tank (L ∥ C) in the series arm, a series-RLC trap to ground through an
        // internal node, a load R ∥ C, and the output at the middle node.
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 2.0, 10.0)
            .inductor("L1", "in", "mid", 1e-3)
            .capacitor("C1", "in", "mid", 100e-9)
            .resistor("R2", "mid", "t1", 5.0)
            .inductor("L2", "t1", "t2", 2e-3)
            .capacitor("C2", "t2", "0", 50e-9)
            .resistor("R3", "mid", "end", 1e3)
            .resistor("RL", "end", "0", 10e3)
            .capacitor("CL", "end", "0", 1e-9);
        check(&b, "mid");
    }

    #[test]
    fn circuits_that_are_not_ladders_are_declined() {
        // A bridge (Wheatstone-like) between in and out.
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 0.0)
            .resistor("R1", "in", "a", 1e3)
            .resistor("R2", "in", "b", 2e3)
            .resistor("R3", "a", "0", 3e3)
            .resistor("R4", "b", "0", 4e3)
            .capacitor("C5", "a", "b", 1e-9);
        let circuit = b.build().unwrap();
        let probe = Probe::new(&circuit, "V1", "a", "0").unwrap();
        assert!(Reduction::new(&circuit, &probe).is_none());
        // A controlled source.
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 0.0)
            .resistor("R1", "in", "0", 1e3)
            .vcvs("E1", "out", "0", "in", "0", crate::circuit::Gain::Constant(2.0))
            .resistor("R2", "out", "0", 1e3);
        let circuit = b.build().unwrap();
        let probe = Probe::new(&circuit, "V1", "out", "0").unwrap();
        assert!(Reduction::new(&circuit, &probe).is_none());
    }

    #[test]
    fn dc_is_left_to_the_engine() {
        let mut b = CircuitBuilder::new();
        b.voltage_source("V1", "in", "0", 1.0, 0.0).capacitor("C1", "in", "out", 1e-6).resistor("R1", "out", "0", 1e3);
        let reduction = check(&b, "out");
        let circuit = b.build().unwrap();
        assert_eq!(reduction.solve(0.0, &values(&circuit)), None);
    }
}
