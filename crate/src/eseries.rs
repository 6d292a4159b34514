//! IEC 60063 preferred values (the E3 to E192 series) and stock lists: the values parts are sold in.
//!
//! A [`Series`] is one decade of mantissas, 1 ≤ m < 10, repeated in every decade. A [`StockList`] is
//! a person's own drawer of values. [`PartValues`] covers both and answers the questions a fitting
//! engine asks, such as the nearest value, the neighbours of a value, or every value in a range.
//!
//! # Sources of the tables
//! The values are those of IEC 60063, "Preferred number series for resistors and capacitors"
//! (first issued as IEC 63 in 1963). We did not read the standard's own text. Every value of the
//! tables below was checked against these public copies, as collected in the project's
//! `references.md` §1:
//! - S1: repository `rob-smallshire/eseries`, `eseries/eseries.py` (dict `_E` and `_TOLERANCE`).
//! - S2: repository `microentropie/IEC60063`, `src/E3.cpp`, `src/E24.cpp`, `src/E96.cpp` and
//!   `src/E192.cpp`.
//! - S3: Wikipedia, "E series of preferred numbers" (E3 to E24 and the tolerances).
//! - S4: electro-tech-online.com, "Common resistor and capacitor values" (tolerances).
//!
//! All four agree value for value except at E192 index 185. There S1 gives the standard's 9.20
//! and S2 gives 9.19, which is what rounding 10^(185/192) = 9.19479 would give. We use 9.20.
//! E3 to E24 have 2 significant figures and E48 to E192 have 3. Some of the 2-figure values
//! (such as 2.7, 3.3, 4.7 and 8.2) are not the rounded powers of ten. E24 is not a subset of E48.
//!
//! # Tolerances
//! [`Series::tolerance_pct`] gives each series' usual tolerance: E6 ±20 %, E12 ±10 %, E24 ±5 %,
//! E48 ±2 %, E96 ±1 % and E192 ±0.5 % (S1, S3, S4 agree). E192 is also sold at ±0.25 % and tighter.
//! The sources disagree for **E3**: S3 and a comment in S2 say "> 20 %", S1 says 40 % and S4 says
//! 50 % and "no longer used". **We use 40 %**, from S1. It is the only figure that is a number
//! and comes from a table of tolerances. It also fits the pattern of the other series, where the
//! tolerance roughly covers the largest half-gap between neighbours ((step − 1)/(step + 1)). That
//! half-gap is 20.00 % for E6 and 37.50 % for E3, so ±40 % bands close E3's gaps and "> 20 %" would
//! not. The tolerance is only a default: stock lists carry their own.
//!
//! # Values in SI units
//! Series values are exact decimal numbers: the mantissa's digits times a power of ten, rounded
//! once to the nearest `f64`. So 4.7 nF is the `f64` literal `4.7e-9` and 4.7 kΩ is `4700.0`. A
//! series spans every decade that `f64` can hold as a normal number, from about 2.2e-308 to 1.8e308.
//! Two values are treated as the same when they differ by at most [`SAME_VALUE_RTOL`] relative to
//! the value asked about. This covers values that come from arithmetic, such as 47.0 × 1e-10.

use std::fmt;

use crate::notation::{parse_value, Quantity};
use crate::synthesis::SynthesisError;

/// An IEC 60063 series of preferred values.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Series {
    /// 3 values per decade, usual tolerance ±40 % (our choice, see the module docs).
    E3,
    /// 6 values per decade, ±20 %.
    E6,
    /// 12 values per decade, ±10 %.
    E12,
    /// 24 values per decade, ±5 %.
    E24,
    /// 48 values per decade, 3 significant figures, ±2 %.
    E48,
    /// 96 values per decade, 3 significant figures, ±1 %.
    E96,
    /// 192 values per decade, 3 significant figures, ±0.5 % (and tighter).
    E192,
}

/// A set of purchasable values: a standard series (all decades) or a person's stock list.
#[derive(Debug, Clone, PartialEq)]
pub enum PartValues {
    /// Every decade of an IEC 60063 series.
    Series(Series),
    /// The values in a stock list, and no others.
    Stock(StockList),
}

/// A named list of values a person has in stock, such as one drawer of inductors.
///
/// **Invariant:** the values are positive, finite, sorted ascending and contain no two within
/// [`SAME_VALUE_RTOL`] of each other.
#[derive(Debug, Clone, PartialEq)]
pub struct StockList {
    name: String,
    values: Vec<f64>,
    tolerance_pct: Option<f64>,
}

/// A stock list file that could not be read: which line, what it said and what was wrong.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct StockError {
    /// The 1-based line number. For a list with no value at all, this is the number of the last
    /// line (0 for an empty text).
    pub line: usize,
    /// The line exactly as written, without its line break. Empty for a list with no value.
    pub text: String,
    /// What was wrong and what is accepted. The offending text is quoted.
    pub problem: String,
}

/// Two values within this relative distance count as the same value: 1e-9.
///
/// The distance is taken relative to the value asked about. It absorbs the rounding of values
/// that come from arithmetic, and it is far smaller than any step of any series (0.6 % in E192).
pub const SAME_VALUE_RTOL: f64 = 1e-9;

/// The most values [`PartValues::values_between`] returns: 100 000.
pub const MAX_LISTED_VALUES: usize = 100_000;

// Source: IEC 60063 as tabulated in references.md §1.2 (S1, S2, S3), one decade each.
const E3: [f64; 3] = [1.0, 2.2, 4.7];
const E6: [f64; 6] = [1.0, 1.5, 2.2, 3.3, 4.7, 6.8];
const E12: [f64; 12] = [1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2];
#[rustfmt::skip]
const E24: [f64; 24] = [
    1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0,
    3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1,
];
#[rustfmt::skip]
const E48: [f64; 48] = [
    1.00, 1.05, 1.10, 1.15, 1.21, 1.27, 1.33, 1.40, 1.47, 1.54, 1.62, 1.69, // 0
    1.78, 1.87, 1.96, 2.05, 2.15, 2.26, 2.37, 2.49, 2.61, 2.74, 2.87, 3.01, // 12
    3.16, 3.32, 3.48, 3.65, 3.83, 4.02, 4.22, 4.42, 4.64, 4.87, 5.11, 5.36, // 24
    5.62, 5.90, 6.19, 6.49, 6.81, 7.15, 7.50, 7.87, 8.25, 8.66, 9.09, 9.53, // 36
];
#[rustfmt::skip]
const E96: [f64; 96] = [
    1.00, 1.02, 1.05, 1.07, 1.10, 1.13, 1.15, 1.18, 1.21, 1.24, 1.27, 1.30, // 0
    1.33, 1.37, 1.40, 1.43, 1.47, 1.50, 1.54, 1.58, 1.62, 1.65, 1.69, 1.74, // 12
    1.78, 1.82, 1.87, 1.91, 1.96, 2.00, 2.05, 2.10, 2.15, 2.21, 2.26, 2.32, // 24
    2.37, 2.43, 2.49, 2.55, 2.61, 2.67, 2.74, 2.80, 2.87, 2.94, 3.01, 3.09, // 36
    3.16, 3.24, 3.32, 3.40, 3.48, 3.57, 3.65, 3.74, 3.83, 3.92, 4.02, 4.12, // 48
    4.22, 4.32, 4.42, 4.53, 4.64, 4.75, 4.87, 4.99, 5.11, 5.23, 5.36, 5.49, // 60
    5.62, 5.76, 5.90, 6.04, 6.19, 6.34, 6.49, 6.65, 6.81, 6.98, 7.15, 7.32, // 72
    7.50, 7.68, 7.87, 8.06, 8.25, 8.45, 8.66, 8.87, 9.09, 9.31, 9.53, 9.76, // 84
];
// Index 185 is 9.20 (S1 and the standard), not the 9.19 of S2 and of naive rounding.
#[rustfmt::skip]
const E192: [f64; 192] = [
    1.00, 1.01, 1.02, 1.04, 1.05, 1.06, 1.07, 1.09, 1.10, 1.11, 1.13, 1.14, 1.15, 1.17, 1.18, 1.20, // 0
    1.21, 1.23, 1.24, 1.26, 1.27, 1.29, 1.30, 1.32, 1.33, 1.35, 1.37, 1.38, 1.40, 1.42, 1.43, 1.45, // 16
    1.47, 1.49, 1.50, 1.52, 1.54, 1.56, 1.58, 1.60, 1.62, 1.64, 1.65, 1.67, 1.69, 1.72, 1.74, 1.76, // 32
    1.78, 1.80, 1.82, 1.84, 1.87, 1.89, 1.91, 1.93, 1.96, 1.98, 2.00, 2.03, 2.05, 2.08, 2.10, 2.13, // 48
    2.15, 2.18, 2.21, 2.23, 2.26, 2.29, 2.32, 2.34, 2.37, 2.40, 2.43, 2.46, 2.49, 2.52, 2.55, 2.58, // 64
    2.61, 2.64, 2.67, 2.71, 2.74, 2.77, 2.80, 2.84, 2.87, 2.91, 2.94, 2.98, 3.01, 3.05, 3.09, 3.12, // 80
    3.16, 3.20, 3.24, 3.28, 3.32, 3.36, 3.40, 3.44, 3.48, 3.52, 3.57, 3.61, 3.65, 3.70, 3.74, 3.79, // 96
    3.83, 3.88, 3.92, 3.97, 4.02, 4.07, 4.12, 4.17, 4.22, 4.27, 4.32, 4.37, 4.42, 4.48, 4.53, 4.59, // 112
    4.64, 4.70, 4.75, 4.81, 4.87, 4.93, 4.99, 5.05, 5.11, 5.17, 5.23, 5.30, 5.36, 5.42, 5.49, 5.56, // 128
    5.62, 5.69, 5.76, 5.83, 5.90, 5.97, 6.04, 6.12, 6.19, 6.26, 6.34, 6.42, 6.49, 6.57, 6.65, 6.73, // 144
    6.81, 6.90, 6.98, 7.06, 7.15, 7.23, 7.32, 7.41, 7.50, 7.59, 7.68, 7.77, 7.87, 7.96, 8.06, 8.16, // 160
    8.25, 8.35, 8.45, 8.56, 8.66, 8.76, 8.87, 8.98, 9.09, 9.20, 9.31, 9.42, 9.53, 9.65, 9.76, 9.88, // 176
];

/// 10^0 to 10^22: every power of ten that an `f64` holds exactly.
const EXACT_POWERS_OF_TEN: [f64; 23] = [
    1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20,
    1e21, 1e22,
];

/// Decades searched beyond the `f64` range, so that every search is bracketed.
const DECADE_LIMIT: i64 = 309;

impl Series {
    /// Every series, coarsest first.
    pub const ALL: [Series; 7] =
        [Series::E3, Series::E6, Series::E12, Series::E24, Series::E48, Series::E96, Series::E192];

    /// The series' name as the standard writes it, such as `"E24"`.
    pub fn name(self) -> &'static str {
        match self {
            Series::E3 => "E3",
            Series::E6 => "E6",
            Series::E12 => "E12",
            Series::E24 => "E24",
            Series::E48 => "E48",
            Series::E96 => "E96",
            Series::E192 => "E192",
        }
    }

    /// Finds a series by name, in any case and ignoring surrounding whitespace: `"E24"`, `"e24"`.
    ///
    /// Returns `None` for anything else. Callers should list [`Series::ALL`] in their message.
    pub fn from_name(name: &str) -> Option<Series> {
        let name = name.trim();
        Series::ALL.into_iter().find(|series| series.name().eq_ignore_ascii_case(name))
    }

    /// The mantissas of one decade, ascending, 1.0 ≤ m < 10, exactly as IEC 60063 lists them.
    ///
    /// E3 to E24 have 2 significant figures and E48 to E192 have 3. See the module docs for the
    /// sources.
    pub fn mantissas(self) -> &'static [f64] {
        match self {
            Series::E3 => &E3,
            Series::E6 => &E6,
            Series::E12 => &E12,
            Series::E24 => &E24,
            Series::E48 => &E48,
            Series::E96 => &E96,
            Series::E192 => &E192,
        }
    }

    /// The number of values in one decade (3 for E3, 192 for E192).
    pub fn values_per_decade(self) -> usize {
        self.mantissas().len()
    }

    /// The usual tolerance of parts sold in this series, in percent (5.0 for E24).
    ///
    /// E3 gives 40.0, our choice among disagreeing sources (see the module docs).
    pub fn tolerance_pct(self) -> f64 {
        match self {
            Series::E3 => 40.0,
            Series::E6 => 20.0,
            Series::E12 => 10.0,
            Series::E24 => 5.0,
            Series::E48 => 2.0,
            Series::E96 => 1.0,
            Series::E192 => 0.5,
        }
    }

    /// The mantissa at `position` as an integer of 3 digits: 470 for 4.7 and 920 for 9.20.
    fn digits(self, position: usize) -> u32 {
        // The table values are within 1e-15 of an integer after scaling, so rounding is exact.
        (self.mantissas()[position] * 100.0).round() as u32
    }

    /// The value with global index `index`, counting mantissas across decades: index 0 is 1.0,
    /// index N is 10.0 and index −1 is the largest mantissa × 0.1. The value may overflow to
    /// infinity or fall below the normal range; callers check with [`in_range`].
    fn value_at(self, index: i64) -> f64 {
        let per_decade = self.values_per_decade() as i64;
        let decade = index.div_euclid(per_decade);
        let position = index.rem_euclid(per_decade) as usize;
        decimal(self.digits(position), decade - 2)
    }

    /// The global index of the largest value ≤ `t`, for a `t` that is finite and normal.
    fn floor_index(self, t: f64) -> i64 {
        let per_decade = self.values_per_decade() as i64;
        // The irregular values lie at most a few positions from 10^(i/N), so the estimate is
        // close and the two walks below are short. The clamp keeps both walks bracketed: the
        // values at −DECADE_LIMIT decades lie below every normal `t` and those at +DECADE_LIMIT
        // are infinite.
        let estimate = (t.log10() * per_decade as f64).floor() as i64;
        let mut index = estimate.clamp(-DECADE_LIMIT * per_decade, DECADE_LIMIT * per_decade);
        while self.value_at(index) > t {
            index -= 1;
        }
        while self.value_at(index + 1) <= t {
            index += 1;
        }
        index
    }

    /// The largest value ≤ `t` (`inclusive`) or < `t`.
    fn largest_below(self, t: f64, bound: Bound) -> Option<f64> {
        if t.is_nan() || t < f64::MIN_POSITIVE {
            return None;
        }
        let t = t.min(f64::MAX);
        let mut index = self.floor_index(t);
        if bound == Bound::Exclusive && self.value_at(index) == t {
            index -= 1;
        }
        let value = self.value_at(index);
        in_range(value).then_some(value)
    }

    /// The global index of the smallest value ≥ `t` (`inclusive`) or > `t`.
    fn first_index_above(self, t: f64, bound: Bound) -> Option<i64> {
        if t.is_nan() || t >= f64::MAX {
            return None;
        }
        // Every value is a normal number, so raising `t` to the smallest normal number changes
        // nothing but keeps `floor_index` in its domain.
        let t = t.max(f64::MIN_POSITIVE);
        let mut index = self.floor_index(t);
        if bound == Bound::Exclusive || self.value_at(index) < t {
            index += 1;
        }
        in_range(self.value_at(index)).then_some(index)
    }
}

impl fmt::Display for Series {
    fn fmt(&self, formatter: &mut fmt::Formatter<'_>) -> fmt::Result {
        formatter.write_str(self.name())
    }
}

impl StockList {
    /// Makes a stock list from values in SI units, sorting them and dropping duplicates.
    ///
    /// Values within [`SAME_VALUE_RTOL`] of a smaller one are dropped as duplicates.
    /// `tolerance_pct` is the parts' tolerance in percent, if known.
    ///
    /// # Errors
    /// [`SynthesisError::BadValue`] for a value that is not finite and above 0, or a tolerance that
    /// is not finite, above 0 and below 100. [`SynthesisError::EmptyStock`] if `values` is empty.
    pub fn new(name: &str, values: Vec<f64>, tolerance_pct: Option<f64>) -> Result<StockList, SynthesisError> {
        if let Some(&value) = values.iter().find(|value| !is_usable(**value)) {
            return Err(SynthesisError::BadValue { what: "stock value", value });
        }
        if let Some(tolerance) = tolerance_pct.filter(|tolerance| !is_usable_tolerance(*tolerance)) {
            return Err(SynthesisError::BadValue { what: "stock tolerance in percent (below 100)", value: tolerance });
        }
        let mut values = values;
        values.sort_by(f64::total_cmp);
        values.dedup_by(|later, kept| *later <= *kept * (1.0 + SAME_VALUE_RTOL));
        if values.is_empty() {
            return Err(SynthesisError::EmptyStock { name: name.to_string() });
        }
        Ok(StockList { name: name.to_string(), values, tolerance_pct })
    }

    /// Parses a stock list file, with values in engineering notation for `quantity`.
    ///
    /// The format, line by line:
    /// - One value per line, read by [`parse_value`]: `4k7`, `100n`, `2.2u`, `1mH`, `1e-9`. A unit
    ///   symbol is allowed if it fits `quantity`.
    /// - `#` starts a comment that runs to the end of the line. Blank lines are ignored.
    /// - At most one tolerance line: the word `tolerance` (any case), an optional `:` or `±`, a
    ///   number above 0 and below 100, and `%`. For example `tolerance 5%`, `Tolerance: ±10 %`.
    ///
    /// Example: `"# drawer 3\ntolerance 10%\n100u\n220u # air core\n1mH\n"`.
    ///
    /// # Errors
    /// A [`StockError`] with the line number and text of the first line that is not a positive
    /// value, a valid tolerance line, a comment or blank. The same error comes for a second
    /// tolerance line, and for a list with no value (that error points at the last line).
    pub fn parse(name: &str, text: &str, quantity: Quantity) -> Result<StockList, StockError> {
        let mut values = Vec::new();
        let mut tolerance_pct = None;
        let mut last_line = 0;
        for (line_idx, raw) in text.lines().enumerate() {
            let line = line_idx + 1;
            last_line = line;
            let content = raw.split('#').next().unwrap_or_default().trim();
            if content.is_empty() {
                continue;
            }
            let error = |problem: String| StockError { line, text: raw.to_string(), problem };
            if let Some(rest) = strip_tolerance_keyword(content) {
                if tolerance_pct.is_some() {
                    return Err(error(format!(
                        "{} is a second tolerance line; give the tolerance once per list",
                        quote(content)
                    )));
                }
                tolerance_pct = Some(read_tolerance(rest).ok_or_else(|| {
                    error(format!(
                        "cannot read {} as a tolerance; write the word tolerance and a percentage above 0 \
                         and below 100, e.g. tolerance 5%",
                        quote(content)
                    ))
                })?);
                continue;
            }
            match parse_value(content, quantity) {
                Ok(value) if is_usable(value) => values.push(value),
                Ok(_) => {
                    return Err(error(format!(
                        "the value {} is not usable; stock values must be above 0",
                        quote(content)
                    )))
                }
                Err(parse_error) => return Err(error(parse_error.to_string())),
            }
        }
        if values.is_empty() {
            return Err(StockError {
                line: last_line,
                text: String::new(),
                problem: "the list holds no value; write one value per line, e.g. 4k7 or 100n, and start \
                          comments with #"
                    .to_string(),
            });
        }
        // Every value and the tolerance were checked above, so this cannot fail; map the error
        // anyway rather than panic.
        StockList::new(name, values, tolerance_pct).map_err(|synthesis_error| StockError {
            line: last_line,
            text: String::new(),
            problem: synthesis_error.to_string(),
        })
    }

    /// The list's name, as given.
    pub fn name(&self) -> &str {
        &self.name
    }

    /// The values in SI units, ascending.
    pub fn values(&self) -> &[f64] {
        &self.values
    }

    /// The parts' tolerance in percent, if the list gives one.
    pub fn tolerance_pct(&self) -> Option<f64> {
        self.tolerance_pct
    }

    /// The largest value ≤ `t` (`inclusive`) or < `t`.
    fn largest_below(&self, t: f64, bound: Bound) -> Option<f64> {
        if t.is_nan() {
            return None;
        }
        let count = match bound {
            Bound::Inclusive => self.values.partition_point(|value| *value <= t),
            Bound::Exclusive => self.values.partition_point(|value| *value < t),
        };
        count.checked_sub(1).map(|index| self.values[index])
    }

    /// The position of the smallest value ≥ `t` (`inclusive`) or > `t`.
    fn first_index_above(&self, t: f64, bound: Bound) -> Option<usize> {
        if t.is_nan() {
            return None;
        }
        let index = match bound {
            Bound::Inclusive => self.values.partition_point(|value| *value < t),
            Bound::Exclusive => self.values.partition_point(|value| *value <= t),
        };
        (index < self.values.len()).then_some(index)
    }
}

impl fmt::Display for StockError {
    fn fmt(&self, formatter: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.line == 0 {
            write!(formatter, "stock list: {}", self.problem)
        } else {
            write!(formatter, "stock list line {}: {}", self.line, self.problem)
        }
    }
}

impl std::error::Error for StockError {}

impl PartValues {
    /// The name: the series' name (`"E96"`) or the stock list's name.
    pub fn name(&self) -> String {
        match self {
            PartValues::Series(series) => series.name().to_string(),
            PartValues::Stock(stock) => stock.name.clone(),
        }
    }

    /// The usual tolerance in percent: the series' tolerance, or the stock list's if it has one.
    pub fn tolerance_pct(&self) -> Option<f64> {
        match self {
            PartValues::Series(series) => Some(series.tolerance_pct()),
            PartValues::Stock(stock) => stock.tolerance_pct,
        }
    }

    /// The value nearest to `x` in ratio (log distance), in any decade. A tie goes to the larger
    /// value.
    ///
    /// Returns `None` for an `x` that is not finite and above 0, and for a set with no value.
    /// For a series the result is within (√s − 1) of `x`, where s is the series' largest step.
    pub fn nearest(&self, x: f64) -> Option<f64> {
        if !is_usable(x) {
            return None;
        }
        let below = self.largest_below(x, Bound::Inclusive);
        let above = self.smallest_above(x, Bound::Inclusive);
        match (below, above) {
            (Some(below), Some(above)) => Some(if above / x <= x / below { above } else { below }),
            (below, above) => above.or(below),
        }
    }

    /// The largest value below `x`, not counting a value the same as `x` within
    /// [`SAME_VALUE_RTOL`]. So the result for a value is the value before it.
    ///
    /// Returns `None` for an `x` that is not finite and above 0, or when no value is below.
    pub fn next_below(&self, x: f64) -> Option<f64> {
        is_usable(x).then(|| self.largest_below(x * (1.0 - SAME_VALUE_RTOL), Bound::Exclusive)).flatten()
    }

    /// The smallest value above `x`, not counting a value the same as `x` within
    /// [`SAME_VALUE_RTOL`]. So the result for a value is the value after it.
    ///
    /// Returns `None` for an `x` that is not finite and above 0, or when no value is above.
    pub fn next_above(&self, x: f64) -> Option<f64> {
        is_usable(x).then(|| self.smallest_above(x * (1.0 + SAME_VALUE_RTOL), Bound::Exclusive)).flatten()
    }

    /// The largest value ≤ `x`. A value the same as `x` within [`SAME_VALUE_RTOL`] counts, even if
    /// it is slightly above `x`, and is returned exactly as listed.
    ///
    /// Returns `None` for an `x` that is not finite and above 0, or when no value is at or below.
    pub fn floor(&self, x: f64) -> Option<f64> {
        is_usable(x).then(|| self.largest_below(x * (1.0 + SAME_VALUE_RTOL), Bound::Inclusive)).flatten()
    }

    /// The smallest value ≥ `x`. A value the same as `x` within [`SAME_VALUE_RTOL`] counts, even
    /// if it is slightly below `x`, and is returned exactly as listed.
    ///
    /// Returns `None` for an `x` that is not finite and above 0, or when no value is at or above.
    pub fn ceil(&self, x: f64) -> Option<f64> {
        is_usable(x).then(|| self.smallest_above(x * (1.0 - SAME_VALUE_RTOL), Bound::Inclusive)).flatten()
    }

    /// Every value from `low` to `high`, both included, ascending, in every decade.
    ///
    /// Both ends count values the same within [`SAME_VALUE_RTOL`]. A `low` of 0 or below starts at
    /// the smallest value. The list stops after [`MAX_LISTED_VALUES`] values, so a very wide range of
    /// a series is cut off at the top. Series values are exact decimals: 4.7 × 10^3 is `4700.0` and
    /// 4.7 × 10^-9 is the literal `4.7e-9`.
    ///
    /// Returns an empty list if either end is NaN or `low > high`.
    pub fn values_between(&self, low: f64, high: f64) -> Vec<f64> {
        if low.is_nan() || high.is_nan() || low > high {
            return Vec::new();
        }
        let start = low * (1.0 - SAME_VALUE_RTOL);
        let end = high * (1.0 + SAME_VALUE_RTOL);
        match self {
            PartValues::Series(series) => {
                let Some(mut index) = series.first_index_above(start, Bound::Inclusive) else {
                    return Vec::new();
                };
                let mut values = Vec::new();
                while values.len() < MAX_LISTED_VALUES {
                    let value = series.value_at(index);
                    if !(in_range(value) && value <= end) {
                        break;
                    }
                    values.push(value);
                    index += 1;
                }
                values
            }
            PartValues::Stock(stock) => {
                let Some(first) = stock.first_index_above(start, Bound::Inclusive) else {
                    return Vec::new();
                };
                stock.values[first..]
                    .iter()
                    .take_while(|value| **value <= end)
                    .take(MAX_LISTED_VALUES)
                    .copied()
                    .collect()
            }
        }
    }

    /// Whether `x` is one of the values, within [`SAME_VALUE_RTOL`] relative to `x`.
    ///
    /// Returns `false` for an `x` that is not finite and above 0.
    pub fn is_value(&self, x: f64) -> bool {
        self.nearest(x).is_some_and(|value| (value - x).abs() <= SAME_VALUE_RTOL * x)
    }

    /// The largest value ≤ `t` (`inclusive`) or < `t`, with no tolerance.
    fn largest_below(&self, t: f64, bound: Bound) -> Option<f64> {
        match self {
            PartValues::Series(series) => series.largest_below(t, bound),
            PartValues::Stock(stock) => stock.largest_below(t, bound),
        }
    }

    /// The smallest value ≥ `t` (`inclusive`) or > `t`, with no tolerance.
    fn smallest_above(&self, t: f64, bound: Bound) -> Option<f64> {
        match self {
            PartValues::Series(series) => series.first_index_above(t, bound).map(|index| series.value_at(index)),
            PartValues::Stock(stock) => stock.first_index_above(t, bound).map(|index| stock.values[index]),
        }
    }
}

impl From<Series> for PartValues {
    fn from(series: Series) -> PartValues {
        PartValues::Series(series)
    }
}

impl From<StockList> for PartValues {
    fn from(stock: StockList) -> PartValues {
        PartValues::Stock(stock)
    }
}

/// Whether a search bound counts a value equal to it.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Bound {
    /// A value equal to the bound counts.
    Inclusive,
    /// Only values strictly beyond the bound count.
    Exclusive,
}

/// `digits` × 10^`exponent`, correctly rounded to the nearest `f64`.
///
/// Multiplying or dividing by an exactly held power of ten is a single correctly rounded
/// operation on exact operands, so 47 / 10^10 is the literal `4.7e-9`. Outside 10^±22 the powers
/// of ten are not exact, and Rust's decimal parser, which rounds correctly, does the work.
fn decimal(digits: u32, exponent: i64) -> f64 {
    let digits_f64 = f64::from(digits);
    match exponent {
        0..=22 => digits_f64 * EXACT_POWERS_OF_TEN[exponent as usize],
        -22..=-1 => digits_f64 / EXACT_POWERS_OF_TEN[exponent.unsigned_abs() as usize],
        _ => format!("{digits}e{exponent}").parse().unwrap_or(f64::NAN),
    }
}

/// Whether a series value is in the normal, finite `f64` range.
fn in_range(value: f64) -> bool {
    value.is_finite() && value >= f64::MIN_POSITIVE
}

/// Whether `x` is finite and above 0, the only values the queries accept.
fn is_usable(x: f64) -> bool {
    x.is_finite() && x > 0.0
}

/// Whether a tolerance in percent is finite, above 0 and below 100.
fn is_usable_tolerance(tolerance_pct: f64) -> bool {
    tolerance_pct.is_finite() && tolerance_pct > 0.0 && tolerance_pct < 100.0
}

/// The rest of a line that starts with the word `tolerance` in any case, or `None`.
fn strip_tolerance_keyword(content: &str) -> Option<&str> {
    const KEYWORD: &str = "tolerance";
    let head = content.get(..KEYWORD.len())?;
    head.eq_ignore_ascii_case(KEYWORD).then(|| &content[KEYWORD.len()..])
}

/// Reads `[:] [±] number %` after the keyword, as a tolerance in percent.
fn read_tolerance(rest: &str) -> Option<f64> {
    let rest = rest.trim_start();
    let rest = rest.strip_prefix(':').unwrap_or(rest).trim_start();
    let rest = rest.strip_prefix('±').unwrap_or(rest);
    let number = rest.trim_end().strip_suffix('%')?.trim();
    let tolerance_pct: f64 = number.parse().ok()?;
    is_usable_tolerance(tolerance_pct).then_some(tolerance_pct)
}

/// Quotes text for a message.
fn quote(text: &str) -> String {
    format!("{text:?}")
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    // Source: IEC 60063 as tabulated in references.md §1.2 (S1 rob-smallshire/eseries, S2, S3)
    const REFERENCE_E3: [f64; 3] = [1.0, 2.2, 4.7];
    // Source: IEC 60063 as tabulated in references.md §1.2 (S1 rob-smallshire/eseries, S2, S3)
    const REFERENCE_E6: [f64; 6] = [1.0, 1.5, 2.2, 3.3, 4.7, 6.8];
    // Source: IEC 60063 as tabulated in references.md §1.2 (S1 rob-smallshire/eseries, S2, S3)
    const REFERENCE_E12: [f64; 12] = [1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2];
    // Source: IEC 60063 as tabulated in references.md §1.2 (S1 rob-smallshire/eseries, S2, S3)
    #[rustfmt::skip]
    const REFERENCE_E24: [f64; 24] = [
        1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5,
        8.2, 9.1,
    ];
    // Source: IEC 60063 as tabulated in references.md §1.2 (S1 rob-smallshire/eseries, S2, S3)
    #[rustfmt::skip]
    const REFERENCE_E48: [f64; 48] = [
        1.00, 1.05, 1.10, 1.15, 1.21, 1.27, 1.33, 1.40, 1.47, 1.54, 1.62, 1.69,
        1.78, 1.87, 1.96, 2.05, 2.15, 2.26, 2.37, 2.49, 2.61, 2.74, 2.87, 3.01,
        3.16, 3.32, 3.48, 3.65, 3.83, 4.02, 4.22, 4.42, 4.64, 4.87, 5.11, 5.36,
        5.62, 5.90, 6.19, 6.49, 6.81, 7.15, 7.50, 7.87, 8.25, 8.66, 9.09, 9.53,
    ];
    // Source: IEC 60063 as tabulated in references.md §1.2 (S1 rob-smallshire/eseries, S2, S3)
    #[rustfmt::skip]
    const REFERENCE_E96: [f64; 96] = [
        1.00, 1.02, 1.05, 1.07, 1.10, 1.13, 1.15, 1.18, 1.21, 1.24, 1.27, 1.30,
        1.33, 1.37, 1.40, 1.43, 1.47, 1.50, 1.54, 1.58, 1.62, 1.65, 1.69, 1.74,
        1.78, 1.82, 1.87, 1.91, 1.96, 2.00, 2.05, 2.10, 2.15, 2.21, 2.26, 2.32,
        2.37, 2.43, 2.49, 2.55, 2.61, 2.67, 2.74, 2.80, 2.87, 2.94, 3.01, 3.09,
        3.16, 3.24, 3.32, 3.40, 3.48, 3.57, 3.65, 3.74, 3.83, 3.92, 4.02, 4.12,
        4.22, 4.32, 4.42, 4.53, 4.64, 4.75, 4.87, 4.99, 5.11, 5.23, 5.36, 5.49,
        5.62, 5.76, 5.90, 6.04, 6.19, 6.34, 6.49, 6.65, 6.81, 6.98, 7.15, 7.32,
        7.50, 7.68, 7.87, 8.06, 8.25, 8.45, 8.66, 8.87, 9.09, 9.31, 9.53, 9.76,
    ];
    // Source: IEC 60063 as tabulated in references.md §1.2 (S1 rob-smallshire/eseries, S2, S3);
    // index 185 is 9.20 as in S1 (S2 has 9.19), references.md §1.3.
    #[rustfmt::skip]
    const REFERENCE_E192: [f64; 192] = [
        1.00, 1.01, 1.02, 1.04, 1.05, 1.06, 1.07, 1.09, 1.10, 1.11, 1.13, 1.14, 1.15, 1.17, 1.18, 1.20,
        1.21, 1.23, 1.24, 1.26, 1.27, 1.29, 1.30, 1.32, 1.33, 1.35, 1.37, 1.38, 1.40, 1.42, 1.43, 1.45,
        1.47, 1.49, 1.50, 1.52, 1.54, 1.56, 1.58, 1.60, 1.62, 1.64, 1.65, 1.67, 1.69, 1.72, 1.74, 1.76,
        1.78, 1.80, 1.82, 1.84, 1.87, 1.89, 1.91, 1.93, 1.96, 1.98, 2.00, 2.03, 2.05, 2.08, 2.10, 2.13,
        2.15, 2.18, 2.21, 2.23, 2.26, 2.29, 2.32, 2.34, 2.37, 2.40, 2.43, 2.46, 2.49, 2.52, 2.55, 2.58,
        2.61, 2.64, 2.67, 2.71, 2.74, 2.77, 2.80, 2.84, 2.87, 2.91, 2.94, 2.98, 3.01, 3.05, 3.09, 3.12,
        3.16, 3.20, 3.24, 3.28, 3.32, 3.36, 3.40, 3.44, 3.48, 3.52, 3.57, 3.61, 3.65, 3.70, 3.74, 3.79,
        3.83, 3.88, 3.92, 3.97, 4.02, 4.07, 4.12, 4.17, 4.22, 4.27, 4.32, 4.37, 4.42, 4.48, 4.53, 4.59,
        4.64, 4.70, 4.75, 4.81, 4.87, 4.93, 4.99, 5.05, 5.11, 5.17, 5.23, 5.30, 5.36, 5.42, 5.49, 5.56,
        5.62, 5.69, 5.76, 5.83, 5.90, 5.97, 6.04, 6.12, 6.19, 6.26, 6.34, 6.42, 6.49, 6.57, 6.65, 6.73,
        6.81, 6.90, 6.98, 7.06, 7.15, 7.23, 7.32, 7.41, 7.50, 7.59, 7.68, 7.77, 7.87, 7.96, 8.06, 8.16,
        8.25, 8.35, 8.45, 8.56, 8.66, 8.76, 8.87, 8.98, 9.09, 9.20, 9.31, 9.42, 9.53, 9.65, 9.76, 9.88,
    ];

    /// The test's own copy of a table, independent of the module's.
    fn reference(series: Series) -> &'static [f64] {
        match series {
            Series::E3 => &REFERENCE_E3,
            Series::E6 => &REFERENCE_E6,
            Series::E12 => &REFERENCE_E12,
            Series::E24 => &REFERENCE_E24,
            Series::E48 => &REFERENCE_E48,
            Series::E96 => &REFERENCE_E96,
            Series::E192 => &REFERENCE_E192,
        }
    }

    /// The largest ratio between neighbours, including the step from the last value to 10 × the first.
    fn max_step(mantissas: &[f64]) -> f64 {
        steps(mantissas).fold(0.0, f64::max)
    }

    fn min_step(mantissas: &[f64]) -> f64 {
        steps(mantissas).fold(f64::INFINITY, f64::min)
    }

    fn steps(mantissas: &[f64]) -> impl Iterator<Item = f64> + '_ {
        let wrapped = mantissas.iter().skip(1).copied().chain(std::iter::once(10.0 * mantissas[0]));
        mantissas.iter().zip(wrapped).map(|(low, high)| high / low)
    }

    /// The naive path: the values of the decades around `x`, built from the reference table's
    /// decimal text (as `"4.70e-9"`) by Rust's correctly rounded parser.
    fn naive_values_around(series: Series, x: f64) -> Vec<f64> {
        let decade = x.log10().floor() as i32;
        let mut values = Vec::new();
        for exponent in decade - 2..=decade + 2 {
            for mantissa in reference(series) {
                values.push(format!("{mantissa:.2}e{exponent}").parse::<f64>().unwrap());
            }
        }
        values
    }

    /// Checks `next_below`, `nearest` and `next_above` of `x` against the expected values.
    fn check(values: &PartValues, x: f64, expected: (Option<f64>, Option<f64>, Option<f64>)) {
        let found = (values.next_below(x), values.nearest(x), values.next_above(x));
        assert_eq!(found, expected, "{} around {x:e}: (next_below, nearest, next_above)", values.name());
    }

    fn drawer() -> StockList {
        StockList::parse("inductor drawer", "100u\n220u # air core\n0.47m\n1mH\n", Quantity::Inductance).unwrap()
    }

    #[test]
    fn every_value_of_every_series_matches_the_reference_table() {
        let counts = [3, 6, 12, 24, 48, 96, 192];
        for (series, count) in Series::ALL.into_iter().zip(counts) {
            assert_eq!(series.mantissas().len(), count, "{series}");
            assert_eq!(series.values_per_decade(), count, "{series}");
            assert_eq!(series.mantissas(), reference(series), "{series}");
        }
    }

    #[test]
    fn mantissas_ascend_within_one_decade() {
        for series in Series::ALL {
            let mantissas = series.mantissas();
            assert_eq!(mantissas[0], 1.0);
            assert!(mantissas.windows(2).all(|pair| pair[0] < pair[1]), "{series}");
            assert!(*mantissas.last().unwrap() < 10.0, "{series}");
        }
    }

    // Source: references.md §1.2, structural checks (computed on the S1 lists).
    #[test]
    fn each_coarser_series_is_every_second_value_of_the_next_finer() {
        let chains = [(Series::E3, Series::E6), (Series::E6, Series::E12), (Series::E12, Series::E24)];
        let chains = chains.into_iter().chain([(Series::E48, Series::E96), (Series::E96, Series::E192)]);
        for (coarse, fine) in chains {
            let every_second: Vec<f64> = fine.mantissas().iter().step_by(2).copied().collect();
            assert_eq!(every_second, coarse.mantissas(), "{coarse} in {fine}");
        }
    }

    // Source: references.md §1.2, "E24 is not a subset of E48".
    #[test]
    fn e24_is_not_a_subset_of_e48() {
        let missing: Vec<f64> =
            Series::E24.mantissas().iter().copied().filter(|value| !Series::E48.mantissas().contains(value)).collect();
        assert!(!missing.is_empty());
        // 1.2 is an E24 value and E48 has 1.21 instead.
        assert!(missing.contains(&1.2), "{missing:?}");
    }

    // Source: references.md §1.3, E192 index 185 (S1 9.20; S2 and naive rounding 9.19).
    #[test]
    fn e192_index_185_is_9_20_not_the_rounded_9_19() {
        assert_eq!(Series::E192.mantissas()[185], 9.20);
        let naive = (10f64.powf(185.0 / 192.0) * 100.0).round() / 100.0;
        assert_eq!(naive, 9.19);
        let e192 = PartValues::Series(Series::E192);
        assert!(e192.is_value(9.2e3));
        assert!(!e192.is_value(9.19e3));
        assert_eq!(e192.nearest(9.19e3), Some(9.2e3));
    }

    // Source: references.md §1.3, values that differ from round(10^(i/N)).
    #[test]
    fn irregular_values_are_exactly_the_listed_indices() {
        let listed: [(Series, Vec<usize>); 7] = [
            (Series::E3, vec![2]),
            (Series::E6, vec![3, 4]),
            (Series::E12, vec![5, 6, 7, 8, 11]),
            (Series::E24, vec![10, 11, 12, 13, 14, 15, 16, 22]),
            (Series::E48, vec![]),
            (Series::E96, vec![]),
            (Series::E192, vec![185]),
        ];
        for (series, expected) in listed {
            let n = series.values_per_decade();
            // 2 significant figures up to E24, 3 from E48.
            let scale = if n <= 24 { 10.0 } else { 100.0 };
            let differing: Vec<usize> = (0..n)
                .filter(|&i| {
                    let rounded = (10f64.powf(i as f64 / n as f64) * scale).round();
                    rounded != (series.mantissas()[i] * scale).round()
                })
                .collect();
            assert_eq!(differing, expected, "{series}");
        }
    }

    // Source: references.md §1.3, step-ratio table (computed on the lists, printed to 4 decimals
    // for the steps and 2 decimals of a percent for the half-gap, hence the tolerances).
    #[test]
    fn step_ratios_and_largest_half_gap_match_the_reference_table() {
        let table = [
            (Series::E3, 2.1277, 2.2000, 37.50),
            (Series::E6, 1.4242, 1.5000, 20.00),
            (Series::E12, 1.1818, 1.2500, 11.11),
            (Series::E24, 1.0667, 1.1538, 7.14),
            (Series::E48, 1.0432, 1.0533, 2.59),
            (Series::E96, 1.0177, 1.0301, 1.48),
            (Series::E192, 1.0061, 1.0196, 0.97),
        ];
        for (series, min_expected, max_expected, half_gap_expected_pct) in table {
            let largest = max_step(series.mantissas());
            let smallest = min_step(series.mantissas());
            let half_gap_pct = (largest - 1.0) / (largest + 1.0) * 100.0;
            assert!((half_gap_pct - half_gap_expected_pct).abs() <= 0.005, "{series}: {half_gap_pct:.4} %");
            assert!((largest - max_expected).abs() <= 0.00005, "{series}: max step {largest}");
            assert!((smallest - min_expected).abs() <= 0.00005, "{series}: min step {smallest}");
        }
    }

    // Source: references.md §1.4 (S1, S3, S4); E3 is our documented choice of S1's 40 %.
    #[test]
    fn tolerances_names_and_lookup() {
        let expected = [40.0, 20.0, 10.0, 5.0, 2.0, 1.0, 0.5];
        for (series, tolerance) in Series::ALL.into_iter().zip(expected) {
            assert_eq!(series.tolerance_pct(), tolerance, "{series}");
            assert_eq!(Series::from_name(series.name()), Some(series));
            assert_eq!(Series::from_name(&series.name().to_lowercase()), Some(series));
            assert_eq!(PartValues::Series(series).name(), series.name());
            assert_eq!(PartValues::Series(series).tolerance_pct(), Some(tolerance));
        }
        assert_eq!(Series::E24.name(), "E24");
        assert_eq!(Series::from_name(" e96 "), Some(Series::E96));
        for unknown in ["E5", "E", "", "24", "E24x", "E1920"] {
            assert_eq!(Series::from_name(unknown), None, "{unknown:?}");
        }
    }

    #[test]
    fn series_values_are_the_exact_decimals_in_si() {
        let e24 = PartValues::Series(Series::E24);
        let nano = e24.values_between(1e-9, 1e-8);
        assert_eq!(nano.len(), 25, "{nano:?}");
        assert!(nano.contains(&4.7e-9), "{nano:?}");
        assert_eq!(nano[0], 1e-9);
        assert_eq!(nano[24], 1e-8);
        assert_eq!(nano[16], 4.7e-9);
        let kilo = e24.values_between(1e3, 1e4);
        assert_eq!(kilo[16], 4700.0);
        assert_eq!(e24.nearest(4.69e3), Some(4700.0));
        // Every E192 value over 40 decades equals its decimal text parsed (the naive path).
        let e192 = PartValues::Series(Series::E192);
        let wide = e192.values_between(1e-20, 1e20);
        assert_eq!(wide.len(), 40 * 192 + 1);
        for (index, value) in wide.iter().enumerate() {
            let mantissa = REFERENCE_E192[index % 192];
            let exponent = index as i32 / 192 - 20;
            let expected: f64 = format!("{mantissa:.2}e{exponent}").parse().unwrap();
            assert_eq!(*value, expected, "index {index}");
        }
        // Far decades go through the parser and stay exact too.
        assert_eq!(e24.nearest(4.71e-30), Some(4.7e-30));
        assert_eq!(e24.nearest(4.71e30), Some(4.7e30));
    }

    #[test]
    fn values_between_edges_and_cap() {
        let e12 = PartValues::Series(Series::E12);
        // Ends within SAME_VALUE_RTOL count.
        assert_eq!(e12.values_between(2.2e3 * (1.0 + 1e-10), 3.3e3 * (1.0 - 1e-10)), vec![2.2e3, 2.7e3, 3.3e3]);
        assert_eq!(e12.values_between(2.3e3, 2.6e3), Vec::<f64>::new());
        assert_eq!(e12.values_between(3.0e3, 2.0e3), Vec::<f64>::new());
        assert_eq!(e12.values_between(f64::NAN, 1.0), Vec::<f64>::new());
        // From 0: every normal E12 value up to 1. In decade 1e-308, 1.0 to 2.2 are below the
        // smallest normal f64 (2.225e-308), so the list starts at 2.7e-308.
        let from_zero = e12.values_between(0.0, 1.0);
        assert_eq!(from_zero[0], 2.7e-308);
        assert_eq!(*from_zero.last().unwrap(), 1.0);
        assert_eq!(from_zero.len(), 308 * 12 - 5 + 1);
        // 600 decades of E192 are 115 200 values: the list stops at the cap, from the bottom up.
        let capped = PartValues::Series(Series::E192).values_between(1e-300, 1e300);
        assert_eq!(capped.len(), MAX_LISTED_VALUES);
        assert_eq!(capped[0], 1e-300);
        assert!(capped.windows(2).all(|pair| pair[0] < pair[1]));
        let to_the_top = PartValues::Series(Series::E3).values_between(1e300, f64::INFINITY);
        // 1e308 is below f64::MAX (1.797e308) and 2.2e308 is not.
        assert_eq!(to_the_top.last(), Some(&1e308));
        assert_eq!(to_the_top.len(), 3 * 8 + 1);
    }

    #[test]
    fn neighbours_of_series_values_and_between_them() {
        let e24 = PartValues::Series(Series::E24);
        check(&e24, 4700.0, (Some(4300.0), Some(4700.0), Some(5100.0)));
        // Within SAME_VALUE_RTOL of 4700 counts as 4700.
        check(&e24, 4700.0 * (1.0 + 1e-10), (Some(4300.0), Some(4700.0), Some(5100.0)));
        check(&e24, 4700.0 * (1.0 - 1e-10), (Some(4300.0), Some(4700.0), Some(5100.0)));
        check(&e24, 4800.0, (Some(4700.0), Some(4700.0), Some(5100.0)));
        // Across a decade: 9.1 and 10 have their geometric mean at 9.539.
        check(&e24, 9.5, (Some(9.1), Some(9.1), Some(10.0)));
        check(&e24, 9.55, (Some(9.1), Some(10.0), Some(10.0)));
        check(&e24, 10.0, (Some(9.1), Some(10.0), Some(11.0)));
        check(&e24, 0.0995, (Some(0.091), Some(0.1), Some(0.1)));
        let e3 = PartValues::Series(Series::E3);
        check(&e3, 1e-6, (Some(4.7e-7), Some(1e-6), Some(2.2e-6)));
        assert_eq!(e24.floor(4700.0 * (1.0 + 1e-10)), Some(4700.0));
        assert_eq!(e24.floor(4700.0 * (1.0 - 1e-10)), Some(4700.0));
        assert_eq!(e24.floor(4699.0), Some(4300.0));
        assert_eq!(e24.ceil(4700.0 * (1.0 - 1e-10)), Some(4700.0));
        assert_eq!(e24.ceil(4701.0), Some(5100.0));
        assert!(e24.is_value(4.7e-9));
        assert!(e24.is_value(47.0 * 1e-10));
        assert!(!e24.is_value(4.8e-9));
    }

    #[test]
    fn unusable_inputs_give_none_and_extremes_do_not_panic() {
        for series in Series::ALL {
            let values = PartValues::Series(series);
            for x in [0.0, -1.0, -0.0, f64::NAN, f64::INFINITY, f64::NEG_INFINITY] {
                check(&values, x, (None, None, None));
                assert_eq!(values.floor(x), None);
                assert_eq!(values.ceil(x), None);
                assert!(!values.is_value(x));
            }
            // At the top of the f64 range the next value would be infinite.
            let top = values.nearest(f64::MAX).unwrap();
            assert!(top.is_finite() && top <= f64::MAX);
            assert_eq!(values.next_above(top), None);
            assert_eq!(values.next_above(f64::MAX), None);
            assert_eq!(values.floor(f64::MAX), Some(top));
            // At the bottom only normal numbers are values.
            let bottom = values.nearest(5e-324).unwrap();
            assert!(bottom >= f64::MIN_POSITIVE);
            assert_eq!(values.next_below(bottom), None);
            assert_eq!(values.floor(f64::MIN_POSITIVE), None);
            assert_eq!(values.ceil(5e-324), Some(bottom));
            assert_eq!(values.nearest(f64::MIN_POSITIVE), Some(bottom));
        }
    }

    #[test]
    fn stock_list_parses_a_drawer_of_inductors() {
        let stock = drawer();
        assert_eq!(stock.name(), "inductor drawer");
        assert_eq!(stock.tolerance_pct(), None);
        let expected = [100e-6, 220e-6, 470e-6, 1e-3];
        assert_eq!(stock.values().len(), expected.len());
        for (value, expected) in stock.values().iter().zip(expected) {
            // parse_value may differ from the literal in the last bit.
            assert!((value - expected).abs() <= 1e-15 * expected, "{value:e} vs {expected:e}");
        }
        let values = PartValues::Stock(stock);
        assert_eq!(values.name(), "inductor drawer");
        assert_eq!(values.tolerance_pct(), None);
    }

    #[test]
    fn stock_list_tolerance_line_comments_and_order() {
        let text = "# drawer 3, film capacitors\nTolerance: ±10 %\n\n  470n  \n100n\n220nF # two of these\n100n\n";
        let stock = StockList::parse("film", text, Quantity::Capacitance).unwrap();
        assert_eq!(stock.tolerance_pct(), Some(10.0));
        assert_eq!(stock.values().len(), 3, "sorted and deduplicated: {:?}", stock.values());
        assert!(stock.values().windows(2).all(|pair| pair[0] < pair[1]));
        let plain = StockList::parse("film", "tolerance 5%\n1u", Quantity::Capacitance).unwrap();
        assert_eq!(plain.tolerance_pct(), Some(5.0));
        assert_eq!(PartValues::Stock(plain).tolerance_pct(), Some(5.0));
    }

    #[test]
    fn stock_list_errors_name_the_line_and_quote_the_text() {
        let error = StockList::parse("r", "# resistors\n1k\n4k7k\n10k\n", Quantity::Resistance).unwrap_err();
        assert_eq!(error.line, 3);
        assert_eq!(error.text, "4k7k");
        let message = error.to_string();
        assert!(message.starts_with("stock list line 3: cannot read \"4k7k\""), "{message}");

        let error = StockList::parse("r", "# nothing yet\n\n# still nothing\n", Quantity::Resistance).unwrap_err();
        assert_eq!(error.line, 3);
        assert!(error.to_string().starts_with("stock list line 3: the list holds no value"), "{error}");
        let error = StockList::parse("r", "", Quantity::Resistance).unwrap_err();
        assert_eq!(error.line, 0);
        assert!(error.to_string().starts_with("stock list: the list holds no value"), "{error}");

        let cases = [
            ("1k\n-10\n", 2, "not usable"),
            ("1k\n0\n", 2, "not usable"),
            ("100nF\n", 1, "capacitance"),
            ("1k\ntolerance 150%\n", 2, "tolerance"),
            ("tolerance five %\n1k\n", 1, "tolerance"),
            ("tolerance 5\n1k\n", 1, "tolerance"),
            ("tolerance 5%\n1k\ntolerance 1%\n", 3, "second tolerance"),
            ("1k\n2k2 3k3\n", 2, "cannot read \"2k2 3k3\""),
        ];
        for (text, line, needle) in cases {
            let error = StockList::parse("r", text, Quantity::Resistance).unwrap_err();
            assert_eq!(error.line, line, "{text:?}: {error}");
            assert!(error.to_string().contains(needle), "{text:?}: {error}");
        }
    }

    #[test]
    fn stock_list_new_checks_values() {
        assert_eq!(
            StockList::new("x", vec![1.0, -1.0], None),
            Err(SynthesisError::BadValue { what: "stock value", value: -1.0 })
        );
        assert!(matches!(StockList::new("x", vec![f64::NAN], None), Err(SynthesisError::BadValue { .. })));
        assert!(matches!(StockList::new("x", vec![1.0], Some(0.0)), Err(SynthesisError::BadValue { .. })));
        assert_eq!(StockList::new("x", vec![], None), Err(SynthesisError::EmptyStock { name: "x".to_string() }));
        let stock = StockList::new("x", vec![3.0, 1.0, 1.0 + 1e-12, 2.0, 3.0], Some(1.0)).unwrap();
        assert_eq!(stock.values(), &[1.0, 2.0, 3.0]);
    }

    #[test]
    fn stock_list_neighbours_stop_at_the_ends() {
        let values = PartValues::Stock(drawer());
        let [v100u, v220u, v470u, v1m] = [0, 1, 2, 3].map(|index| drawer().values()[index]);
        // 300u: 300/220 = 1.36 is closer in ratio than 470/300 = 1.57.
        check(&values, 300e-6, (Some(v220u), Some(v220u), Some(v470u)));
        check(&values, v220u, (Some(v100u), Some(v220u), Some(v470u)));
        check(&values, v1m, (Some(v470u), Some(v1m), None));
        check(&values, 10e-3, (Some(v1m), Some(v1m), None));
        check(&values, v100u, (None, Some(v100u), Some(v220u)));
        check(&values, 1e-6, (None, Some(v100u), Some(v100u)));
        assert_eq!(values.floor(50e-6), None);
        assert_eq!(values.ceil(50e-6), Some(v100u));
        assert_eq!(values.ceil(2e-3), None);
        assert_eq!(values.floor(2e-3), Some(v1m));
        assert_eq!(values.values_between(200e-6, 500e-6), vec![v220u, v470u]);
        assert_eq!(values.values_between(0.0, 1.0).len(), 4);
        assert_eq!(values.values_between(2e-3, 1.0), Vec::<f64>::new());
        assert!(values.is_value(v470u) && !values.is_value(460e-6));
        // A tie in ratio goes to the larger value: 2/1 = 4/2.
        let tie = PartValues::Stock(StockList::new("tie", vec![1.0, 4.0], None).unwrap());
        assert_eq!(tie.nearest(2.0), Some(4.0));
    }

    proptest! {
        // Property: the nearest series value lies within half the largest step (house style,
        // tests), and the neighbours agree with the naive path built from the reference table.
        #[test]
        fn nearest_and_neighbours_hold_for_every_series(exponent in -13.0f64..9.0) {
            let x = 10f64.powf(exponent);
            for series in Series::ALL {
                let values = PartValues::Series(series);
                let nearest = values.nearest(x).unwrap();
                let below = values.next_below(x).unwrap();
                let above = values.next_above(x).unwrap();
                let bound = max_step(reference(series)).ln() / 2.0 + 1e-12;
                prop_assert!((nearest / x).ln().abs() <= bound, "{series} {x:e}: nearest {nearest:e}");
                prop_assert!(below < x && x < above, "{series} {x:e}: {below:e} {above:e}");
                let distance = |v: f64| (v / x).ln().abs();
                prop_assert!(distance(nearest) <= distance(below) && distance(nearest) <= distance(above));

                let naive = naive_values_around(series, x);
                prop_assert!(!naive.iter().any(|v| below < *v && *v < x * (1.0 - SAME_VALUE_RTOL)),
                    "{series} {x:e}: a value lies between next_below {below:e} and x");
                prop_assert!(!naive.iter().any(|v| x * (1.0 + SAME_VALUE_RTOL) < *v && *v < above),
                    "{series} {x:e}: a value lies between x and next_above {above:e}");
                prop_assert!(naive.contains(&nearest) && naive.contains(&below) && naive.contains(&above));
                let naive_nearest = naive.iter().copied().min_by(|a, b| distance(*a).total_cmp(&distance(*b))).unwrap();
                prop_assert_eq!(nearest, naive_nearest);
                prop_assert_eq!(values.floor(x), Some(if values.is_value(x) { nearest } else { below }));
            }
        }

        #[test]
        fn a_series_value_is_its_own_nearest_floor_and_ceil(decade in -12i32..9, position in 0usize..192) {
            for series in Series::ALL {
                let n = series.values_per_decade();
                let mantissa = reference(series)[position % n];
                let value: f64 = format!("{mantissa:.2}e{decade}").parse().unwrap();
                let values = PartValues::Series(series);
                prop_assert!(values.is_value(value));
                prop_assert_eq!(values.nearest(value), Some(value));
                prop_assert_eq!(values.floor(value), Some(value));
                prop_assert_eq!(values.ceil(value), Some(value));
                let previous = if position % n == 0 { reference(series)[n - 1] / 10.0 } else { reference(series)[position % n - 1] };
                let expected_below: f64 = format!("{:.3}e{decade}", previous).parse().unwrap();
                prop_assert_eq!(values.next_below(value), Some(expected_below));
            }
        }
    }
}
