//! Arithmetic on small fixed arrays of f64 ("lanes"), written without branches so that the
//! compiler turns each operation into vector instructions: complex numbers with their frequency
//! derivative, the natural logarithm and the two-argument arctangent.
//!
//! The tolerance engine solves one trial at [`LANES`] frequencies at a time with these
//! ([`crate::reduction::Reduction::solve_lanes`]); everything else in the library uses scalar
//! `f64` and `num_complex`.
//!
//! # Accuracy
//! - [`ln`] is the reduction and polynomial of fdlibm's `e_log.c` (Sun Microsystems, 1993;
//!   x = 2^k·(1 + f) with 1 + f in [√2/2, √2), s = f/(2 + f), a degree-14 Remez polynomial in s;
//!   the coefficients Lg1…Lg7 and the split ln 2 = ln2_hi + ln2_lo are written from memory and
//!   checked against their published bit patterns, quoted beside them). fdlibm states an error
//!   below 1 ulp; the tests bound it against the platform's `f64::ln` over a million values.
//! - [`atan2`] reduces to t = min(|x|, |y|)/max(|x|, |y|) in [0, 1], then to
//!   |u| ≤ tan(π/8) with atan t = π/4 + atan((t − 1)/(t + 1)) above tan(π/8), and uses the odd
//!   polynomial of fdlibm's `s_atan.c` (valid for |u| < 7/16; coefficients aT[0…10] from memory,
//!   checked against their published bit patterns) before putting the octant back. The tests bound
//!   the error against `f64::atan2`. [`Atan2Reduction`] splits it at the quotient u, for a caller
//!   that divides once for several quotients.
//!
//! Lanes whose input is outside the ranges these handle (zero, subnormal, infinite or NaN for
//! [`ln`]; both arguments zero or any non-finite for [`atan2`]) are computed by the scalar `std`
//! function instead, so the results are defined for every input.

// The polynomial constants are written with the digits their source publishes (more than an f64
// holds); the tests check each against its published bit pattern.
#![allow(clippy::excessive_precision)]

/// How many values one lane array holds.
pub const LANES: usize = 8;

/// One f64 per lane.
pub type Lane = [f64; LANES];

/// A complex number per lane.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LaneComplex {
    /// Real parts.
    pub re: Lane,
    /// Imaginary parts.
    pub im: Lane,
}

/// A complex value per lane with its derivative with respect to ω (forward-mode
/// differentiation: d(ab) = a′b + ab′, d(1/z) = −z′/z²).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LaneDual {
    /// The values.
    pub v: LaneComplex,
    /// Their derivatives d/dω.
    pub d: LaneComplex,
}

#[inline(always)]
fn map(f: impl Fn(usize) -> f64) -> Lane {
    std::array::from_fn(f)
}

// Plain methods rather than operator traits: they are inlined into the lane loops by name.
#[allow(clippy::should_implement_trait)]
impl LaneComplex {
    /// Zero in every lane.
    pub const ZERO: LaneComplex = LaneComplex { re: [0.0; LANES], im: [0.0; LANES] };

    /// The same value in every lane.
    #[inline(always)]
    pub fn splat(re: f64, im: f64) -> LaneComplex {
        LaneComplex { re: [re; LANES], im: [im; LANES] }
    }

    /// Lane-wise sum.
    #[inline(always)]
    pub fn add(self, o: LaneComplex) -> LaneComplex {
        LaneComplex { re: map(|k| self.re[k] + o.re[k]), im: map(|k| self.im[k] + o.im[k]) }
    }

    /// Lane-wise product.
    #[inline(always)]
    pub fn mul(self, o: LaneComplex) -> LaneComplex {
        LaneComplex {
            re: map(|k| self.re[k] * o.re[k] - self.im[k] * o.im[k]),
            im: map(|k| self.re[k] * o.im[k] + self.im[k] * o.re[k]),
        }
    }

    /// Lane-wise product with a real number per lane.
    #[inline(always)]
    pub fn scale(self, k: Lane) -> LaneComplex {
        LaneComplex { re: map(|j| self.re[j] * k[j]), im: map(|j| self.im[j] * k[j]) }
    }

    /// Lane-wise reciprocal 1/z = conj(z)/|z|² (infinite or NaN where z is zero, as in
    /// `num_complex`).
    #[inline(always)]
    pub fn inv(self) -> LaneComplex {
        let n: Lane = map(|k| 1.0 / (self.re[k] * self.re[k] + self.im[k] * self.im[k]));
        LaneComplex { re: map(|k| self.re[k] * n[k]), im: map(|k| -self.im[k] * n[k]) }
    }

    /// Lane-wise |z|².
    #[inline(always)]
    pub fn norm_sqr(self) -> Lane {
        map(|k| self.re[k] * self.re[k] + self.im[k] * self.im[k])
    }
}

#[allow(clippy::should_implement_trait)]
impl LaneDual {
    /// A constant (zero derivative).
    #[inline(always)]
    pub fn constant(v: LaneComplex) -> LaneDual {
        LaneDual { v, d: LaneComplex::ZERO }
    }

    /// Sum.
    #[inline(always)]
    pub fn add(self, o: LaneDual) -> LaneDual {
        LaneDual { v: self.v.add(o.v), d: self.d.add(o.d) }
    }

    /// Product, with (ab)′ = a′b + ab′.
    #[inline(always)]
    pub fn mul(self, o: LaneDual) -> LaneDual {
        LaneDual { v: self.v.mul(o.v), d: self.d.mul(o.v).add(self.v.mul(o.d)) }
    }

    /// Product with a real constant per lane.
    #[inline(always)]
    pub fn scale(self, k: Lane) -> LaneDual {
        LaneDual { v: self.v.scale(k), d: self.d.scale(k) }
    }

    /// Reciprocal, with (1/z)′ = −z′/z².
    #[inline(always)]
    pub fn inv(self) -> LaneDual {
        let inverse = self.v.inv();
        let minus_d = LaneComplex { re: map(|k| -self.d.re[k]), im: map(|k| -self.d.im[k]) };
        LaneDual { v: inverse, d: minus_d.mul(inverse).mul(inverse) }
    }
}

// fdlibm e_log.c constants (hex bit patterns as published there).
const LN2_HI: f64 = 6.931_471_803_691_238_164_90e-1; // 3fe62e42 fee00000
const LN2_LO: f64 = 1.908_214_929_270_587_700_02e-10; // 3dea39ef 35793c76
const LG1: f64 = 6.666_666_666_666_735_130e-1; // 3fe55555 55555593
const LG2: f64 = 3.999_999_999_940_941_908e-1; // 3fd99999 9997fa04
const LG3: f64 = 2.857_142_874_366_239_149e-1; // 3fd24924 94229359
const LG4: f64 = 2.222_219_843_214_978_396e-1; // 3fcc71c5 1d8e78af
const LG5: f64 = 1.818_357_216_161_805_012e-1; // 3fc74664 96cb03de
const LG6: f64 = 1.531_383_769_920_937_332e-1; // 3fc39a09 d078c69f
const LG7: f64 = 1.479_819_860_511_658_591e-1; // 3fc2f112 df3e5244

/// 2^52 as f64, for turning a small integer held in a mantissa into a float without an
/// integer-to-float instruction (which baseline x86-64 lacks for 64-bit lanes).
const TWO_52: f64 = 4_503_599_627_370_496.0;

/// The natural logarithm of each lane (see the module doc for the method and its accuracy).
#[inline(always)]
pub fn ln(x: Lane) -> Lane {
    let mut out = [0.0; LANES];
    let mut odd = false;
    for k in 0..LANES {
        let bits = x[k].to_bits();
        let exponent = (bits >> 52) & 0x7ff;
        // Positive normal numbers only; the rest go to the scalar function below.
        odd |= (bits >> 63) != 0 || exponent == 0 || exponent == 0x7ff;
        let mantissa = f64::from_bits((bits & 0x000f_ffff_ffff_ffff) | 0x3ff0_0000_0000_0000);
        let biased = f64::from_bits(0x4330_0000_0000_0000 | exponent) - TWO_52;
        let big = mantissa > std::f64::consts::SQRT_2;
        let m = if big { 0.5 * mantissa } else { mantissa };
        let dk = if big { biased - 1022.0 } else { biased - 1023.0 };
        let f = m - 1.0;
        let s = f / (2.0 + f);
        let z = s * s;
        let w = z * z;
        let t1 = w * (LG2 + w * (LG4 + w * LG6));
        let t2 = z * (LG1 + w * (LG3 + w * (LG5 + w * LG7)));
        let r = t2 + t1;
        let hfsq = 0.5 * f * f;
        out[k] = dk * LN2_HI - ((hfsq - (s * (hfsq + r) + dk * LN2_LO)) - f);
    }
    if odd {
        for k in 0..LANES {
            let exponent = (x[k].to_bits() >> 52) & 0x7ff;
            if x[k].is_sign_negative() || exponent == 0 || exponent == 0x7ff {
                out[k] = x[k].ln();
            }
        }
    }
    out
}

// fdlibm s_atan.c polynomial (hex bit patterns as published there).
const AT: [f64; 11] = [
    3.333_333_333_333_293_180_27e-1,  // 3fd55555 5555550d
    -1.999_999_999_987_648_324_76e-1, // bfc99999 9998ebc4
    1.428_571_427_250_346_637_11e-1,  // 3fc24924 920083ff
    -1.111_111_040_546_235_578_80e-1, // bfbc71c6 fe231671
    9.090_887_133_436_506_561_96e-2,  // 3fb745cd c54c206e
    -7.691_876_205_044_829_994_95e-2, // bfb3b0f2 af749a6d
    6.661_073_137_387_531_206_69e-2,  // 3fb10d66 a0d03d51
    -5.833_570_133_790_573_486_45e-2, // bfadde2d 52defd9a
    4.976_877_994_615_932_360_17e-2,  // 3fa97b4b 24760deb
    -3.653_157_274_421_691_552_70e-2, // bfa2b444 2c6a6c2f
    1.628_582_011_536_578_236_23e-2,  // 3f90ad3a e322da11
];

// π/4, π/2 and π each as a double and the rest (fdlibm s_atan.c's atanhi/atanlo[1] and
// e_atan2.c's pi, pi_lo; hex as published: 3fe921fb 54442d18, 3c81a626 33145c07; 3ff921fb 54442d18,
// 3c91a626 33145c07; 400921fb 54442d18, 3ca1a626 33145c07).
const PI_4_HI: f64 = std::f64::consts::FRAC_PI_4;
const PI_4_LO: f64 = 3.061_616_997_868_383_017_93e-17;
const PI_2_HI: f64 = std::f64::consts::FRAC_PI_2;
const PI_2_LO: f64 = 6.123_233_995_736_766_035_87e-17;
const PI_HI: f64 = std::f64::consts::PI;
const PI_LO: f64 = 1.224_646_799_147_353_177_2e-16;

/// tan(π/8) = √2 − 1, the reduction's switch point.
const TAN_PI_8: f64 = 0.414_213_562_373_095_048_8;

/// atan2(y, x) of each lane in radians, in (−π, π] (see the module doc for the method).
#[inline(always)]
pub fn atan2(y: Lane, x: Lane) -> Lane {
    let reduced = Atan2Reduction::new(y, x);
    let u = map(|k| reduced.numerator[k] / reduced.denominator[k]);
    reduced.finish(u)
}

/// The first half of [`atan2`]: the argument reduced to a quotient u = numerator/denominator
/// with |u| ≤ tan(π/8), which the caller divides (perhaps sharing one division with other
/// quotients), then [`Atan2Reduction::finish`] turns into the angle.
#[derive(Debug, Clone, Copy)]
pub struct Atan2Reduction {
    y: Lane,
    x: Lane,
    /// The quotient's two parts.
    pub numerator: Lane,
    /// Positive where the lane is ordinary (not `odd`).
    pub denominator: Lane,
    swap: [bool; LANES],
    high: [bool; LANES],
    /// Whether any lane is outside the polynomial's inputs (both arguments zero, or any
    /// non-finite); those lanes are computed by `f64::atan2` in `finish`.
    odd: bool,
}

impl Atan2Reduction {
    /// Reduces atan2(y, x) lane by lane.
    #[inline(always)]
    pub fn new(y: Lane, x: Lane) -> Atan2Reduction {
        let mut r = Atan2Reduction {
            y,
            x,
            numerator: [0.0; LANES],
            denominator: [1.0; LANES],
            swap: [false; LANES],
            high: [false; LANES],
            odd: false,
        };
        for k in 0..LANES {
            let (ax, ay) = (x[k].abs(), y[k].abs());
            let swap = ay > ax;
            let (num, den) = if swap { (ax, ay) } else { (ay, ax) };
            r.odd |= !(den > 0.0 && den <= f64::MAX);
            let high = num > TAN_PI_8 * den;
            // Above tan(π/8): u = (t − 1)/(t + 1) with t = num/den, formed without rounding t first.
            r.numerator[k] = if high { num - den } else { num };
            r.denominator[k] = if high { num + den } else { den };
            r.swap[k] = swap;
            r.high[k] = high;
        }
        r
    }

    /// The angles from the quotients u = numerator/denominator.
    #[inline(always)]
    pub fn finish(&self, u: Lane) -> Lane {
        let (x, y) = (self.x, self.y);
        let mut out = [0.0; LANES];
        for k in 0..LANES {
            let u = u[k];
            let (base_hi, base_lo) = if self.high[k] { (PI_4_HI, PI_4_LO) } else { (0.0, 0.0) };
            let z = u * u;
            let w = z * z;
            let s1 = z * (AT[0] + w * (AT[2] + w * (AT[4] + w * (AT[6] + w * (AT[8] + w * AT[10])))));
            let s2 = w * (AT[1] + w * (AT[3] + w * (AT[5] + w * (AT[7] + w * AT[9]))));
            // fdlibm's form: base + atan u with the base split in two parts.
            let mut r = base_hi - ((u * (s1 + s2) - base_lo) - u);
            if self.swap[k] {
                r = PI_2_HI - (r - PI_2_LO);
            }
            if x[k] < 0.0 {
                r = PI_HI - (r - PI_LO);
            }
            out[k] = if y[k].is_sign_negative() { -r } else { r };
        }
        if self.odd {
            for k in 0..LANES {
                let den = x[k].abs().max(y[k].abs());
                if !(den > 0.0 && den <= f64::MAX) || x[k].is_nan() || y[k].is_nan() {
                    out[k] = y[k].atan2(x[k]);
                }
            }
        }
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand_core::SeedableRng;
    use rand_distr::{Distribution, StandardUniform};
    use rand_xoshiro::Xoshiro256PlusPlus;

    /// A lane array from up to LANES values, the last repeated into the remaining lanes.
    fn lane(values: &[f64]) -> Lane {
        std::array::from_fn(|k| values[k.min(values.len() - 1)])
    }

    /// The distance in units in the last place between two finite f64 of the same sign.
    fn ulps(a: f64, b: f64) -> u64 {
        if a == b {
            return 0;
        }
        let key = |v: f64| {
            let bits = v.to_bits() as i64;
            if bits < 0 {
                i64::MIN - bits
            } else {
                bits
            }
        };
        key(a).abs_diff(key(b))
    }

    #[test]
    fn constants_match_their_published_bit_patterns() {
        let table: [(f64, u64); 9] = [
            (LN2_HI, 0x3fe62e42fee00000),
            (LN2_LO, 0x3dea39ef35793c76),
            (LG1, 0x3fe5555555555593),
            (LG2, 0x3fd999999997fa04),
            (LG3, 0x3fd2492494229359),
            (LG4, 0x3fcc71c51d8e78af),
            (LG5, 0x3fc7466496cb03de),
            (LG6, 0x3fc39a09d078c69f),
            (LG7, 0x3fc2f112df3e5244),
        ];
        for (value, bits) in table {
            assert_eq!(value.to_bits(), bits, "{value:e}");
        }
        let at: [u64; 11] = [
            0x3fd555555555550d,
            0xbfc999999998ebc4,
            0x3fc24924920083ff,
            0xbfbc71c6fe231671,
            0x3fb745cdc54c206e,
            0xbfb3b0f2af749a6d,
            0x3fb10d66a0d03d51,
            0xbfadde2d52defd9a,
            0x3fa97b4b24760deb,
            0xbfa2b4442c6a6c2f,
            0x3f90ad3ae322da11,
        ];
        let pis: [(f64, u64); 6] = [
            (PI_4_HI, 0x3fe921fb54442d18),
            (PI_4_LO, 0x3c81a62633145c07),
            (PI_2_HI, 0x3ff921fb54442d18),
            (PI_2_LO, 0x3c91a62633145c07),
            (PI_HI, 0x400921fb54442d18),
            (PI_LO, 0x3ca1a62633145c07),
        ];
        for (value, bits) in AT.iter().copied().zip(at).chain(pis) {
            assert_eq!(value.to_bits(), bits, "{value:e}");
        }
    }

    #[test]
    fn ln_is_within_one_ulp_of_the_platform_over_a_million_values() {
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(7);
        let mut worst = 0;
        for _ in 0..1_000_000 / LANES {
            // Log-uniform over 1e-300..1e300, plus values near 1 where cancellation is worst.
            let x: Lane = std::array::from_fn(|k| {
                let u: f64 = StandardUniform.sample(&mut rng);
                if k == 0 {
                    1.0 + (u - 0.5) * 1e-3
                } else {
                    10f64.powf(600.0 * u - 300.0)
                }
            });
            let got = ln(x);
            for k in 0..LANES {
                let exact = x[k].ln();
                // Near ln = 0 compare absolutely, in ulps of the argument's distance from 1.
                let d = if exact.abs() < 1e-3 {
                    ((got[k] - exact).abs() / (f64::EPSILON * exact.abs())) as u64
                } else {
                    ulps(got[k], exact)
                };
                worst = worst.max(d);
            }
        }
        assert!(worst <= 1, "worst ln error {worst} ulp");
    }

    #[test]
    fn ln_of_special_values_matches_the_platform() {
        let got = ln(lane(&[0.0, -1.0, f64::INFINITY, 5e-324]));
        assert_eq!(got[0], f64::NEG_INFINITY);
        assert!(got[1].is_nan());
        assert_eq!(got[2], f64::INFINITY);
        assert_eq!(got[3], 5e-324f64.ln());
        assert_eq!(ln(lane(&[1.0, 2.0, 0.5, 8.0])), lane(&[0.0, 2f64.ln(), 0.5f64.ln(), 8f64.ln()]));
    }

    #[test]
    fn atan2_is_within_two_ulp_of_the_platform_in_every_octant() {
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(11);
        let mut worst = 0;
        for _ in 0..1_000_000 / LANES {
            let mut draw = || {
                let u: f64 = StandardUniform.sample(&mut rng);
                let v: f64 = StandardUniform.sample(&mut rng);
                (if v < 0.5 { -1.0 } else { 1.0 }) * 10f64.powf(12.0 * u - 6.0)
            };
            let y: Lane = std::array::from_fn(|_| draw());
            let x: Lane = std::array::from_fn(|_| draw());
            let got = atan2(y, x);
            for k in 0..LANES {
                worst = worst.max(ulps(got[k], y[k].atan2(x[k])));
            }
        }
        assert!(worst <= 2, "worst atan2 error {worst} ulp");
    }

    #[test]
    fn atan2_on_the_axes_and_special_values_matches_the_platform() {
        let cases =
            [(0.0, 1.0), (1.0, 0.0), (0.0, -1.0), (-1.0, 0.0), (1.0, 1.0), (-1.0, -1.0), (-0.0, 2.0), (3.0, -3.0)];
        for chunk in cases.chunks(LANES) {
            let y = lane(&chunk.iter().map(|c| c.0).collect::<Vec<_>>());
            let x = lane(&chunk.iter().map(|c| c.1).collect::<Vec<_>>());
            let got = atan2(y, x);
            for k in 0..LANES {
                let exact = y[k].atan2(x[k]);
                assert!(ulps(got[k], exact) <= 1, "atan2({}, {}) = {} vs {exact}", y[k], x[k], got[k]);
                assert_eq!(got[k].is_sign_negative(), exact.is_sign_negative());
            }
        }
        let got = atan2(lane(&[0.0, f64::NAN, f64::INFINITY, 1.0]), lane(&[0.0, 1.0, 1.0, f64::NEG_INFINITY]));
        assert_eq!(got[0], 0.0);
        assert!(got[1].is_nan());
        assert_eq!(got[2], std::f64::consts::FRAC_PI_2);
        assert_eq!(got[3], std::f64::consts::PI);
    }

    #[test]
    fn complex_lanes_agree_with_num_complex() {
        use num_complex::Complex64;
        let a = LaneComplex { re: lane(&[1.0, -2.0, 0.5, 3.0]), im: lane(&[0.5, 1.5, -4.0, 0.0]) };
        let b = LaneComplex { re: lane(&[2.0, 0.25, -1.0, 1e-3]), im: lane(&[-1.0, 3.0, 2.0, 7.0]) };
        let (p, q) = (a.mul(b), a.inv());
        for k in 0..LANES {
            let (za, zb) = (Complex64::new(a.re[k], a.im[k]), Complex64::new(b.re[k], b.im[k]));
            assert_eq!(Complex64::new(p.re[k], p.im[k]), za * zb);
            assert!((Complex64::new(q.re[k], q.im[k]) - za.inv()).norm() <= 1e-15 * za.inv().norm());
        }
    }
}
