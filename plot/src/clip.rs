//! Splitting a sampled curve into runs that lie inside the plotting rectangle.
//!
//! plotters does not clip: a point outside the axis ranges is drawn outside the plotting
//! area or flattened onto its border, so a deep stopband would show as a flat line along
//! the bottom. [`split_into_runs`] instead cuts the curve where it leaves the rectangle,
//! interpolates the exact crossing point and starts a new run where the curve comes back.
//!
//! Coordinates are those of the axes as drawn: the chart passes log10 f for x and, on a log
//! value axis such as |Z|, log10 |Z| for y, so the interpolation is straight on screen.
//! The segment clipping is the Liang–Barsky parametric method (Y.-D. Liang and B. A. Barsky,
//! "A new concept and method for line clipping", ACM Transactions on Graphics 3(1), 1984).

/// Splits the curve through the points `(x[i], y[i])` into runs that lie inside the
/// rectangle `x_range × y_range`, with both ranges given as `(low, high)` and inclusive.
///
/// - A `None` value, or a non-finite x or y, is a gap: the curve is broken there and no
///   line joins the points on either side.
/// - Where a segment between two neighbouring points crosses the rectangle's border, the
///   crossing point is interpolated linearly (in these coordinates) and ends or starts a run,
///   so the drawn curve stops exactly at the border instead of running along it.
/// - A segment that passes through the rectangle with both ends outside gives a run of its
///   own two crossing points.
/// - An isolated point (gaps or outside points on both sides) inside the rectangle gives a
///   run of one point, so a caller can still mark it.
///
/// Every returned point lies inside the rectangle. If `x` and `y` differ in length, only the
/// common prefix is used. Ranges that are not finite or have `low > high` give no runs.
pub fn split_into_runs(x: &[f64], y: &[Option<f64>], x_range: (f64, f64), y_range: (f64, f64)) -> Vec<Vec<(f64, f64)>> {
    let Some(rect) = Rect::new(x_range, y_range) else {
        return Vec::new();
    };
    let mut runs = Vec::new();
    let mut current: Vec<(f64, f64)> = Vec::new();
    let mut previous: Option<(f64, f64)> = None;

    for (&x_value, &y_value) in x.iter().zip(y) {
        let point = match y_value {
            Some(y_value) if x_value.is_finite() && y_value.is_finite() => (x_value, y_value),
            _ => {
                flush(&mut current, &mut runs);
                previous = None;
                continue;
            }
        };
        match previous {
            None => {
                if rect.contains(point) {
                    current.push(point);
                }
            }
            Some(start) => match rect.clip_segment(start, point) {
                None => flush(&mut current, &mut runs),
                Some(clipped) => {
                    if clipped.t_enter > 0.0 {
                        // The segment starts outside, so any open run ended earlier.
                        flush(&mut current, &mut runs);
                    }
                    if clipped.t_exit > clipped.t_enter {
                        if current.is_empty() {
                            current.push(clipped.enter);
                        }
                        current.push(clipped.exit);
                    }
                    if clipped.t_exit < 1.0 {
                        flush(&mut current, &mut runs);
                    }
                }
            },
        }
        previous = Some(point);
    }
    flush(&mut current, &mut runs);
    runs
}

/// An axis-aligned rectangle with inclusive edges.
#[derive(Debug, Clone, Copy)]
struct Rect {
    x_lo: f64,
    x_hi: f64,
    y_lo: f64,
    y_hi: f64,
}

/// The part of a segment inside a [`Rect`]: parameters along the segment (0 = start,
/// 1 = end) and the matching points, snapped onto the rectangle.
#[derive(Debug, Clone, Copy)]
struct ClippedSegment {
    t_enter: f64,
    t_exit: f64,
    enter: (f64, f64),
    exit: (f64, f64),
}

impl Rect {
    fn new(x_range: (f64, f64), y_range: (f64, f64)) -> Option<Self> {
        let all_finite = [x_range.0, x_range.1, y_range.0, y_range.1].iter().all(|v| v.is_finite());
        if !all_finite || x_range.0 > x_range.1 || y_range.0 > y_range.1 {
            return None;
        }
        Some(Self { x_lo: x_range.0, x_hi: x_range.1, y_lo: y_range.0, y_hi: y_range.1 })
    }

    fn contains(&self, (x, y): (f64, f64)) -> bool {
        x >= self.x_lo && x <= self.x_hi && y >= self.y_lo && y <= self.y_hi
    }

    /// Pulls a point that rounding left a hair outside back onto the border.
    fn snap(&self, (x, y): (f64, f64)) -> (f64, f64) {
        (x.clamp(self.x_lo, self.x_hi), y.clamp(self.y_lo, self.y_hi))
    }

    /// Liang–Barsky clipping of the segment `start → end`; `None` when no part is inside.
    fn clip_segment(&self, start: (f64, f64), end: (f64, f64)) -> Option<ClippedSegment> {
        let (dx, dy) = (end.0 - start.0, end.1 - start.1);
        let mut t_enter: f64 = 0.0;
        let mut t_exit: f64 = 1.0;
        // Which edge limits each end, so the crossing point can be put exactly on it.
        let mut enter_edge = None;
        let mut exit_edge = None;
        let edges = [
            (Edge::Left, -dx, start.0 - self.x_lo),
            (Edge::Right, dx, self.x_hi - start.0),
            (Edge::Bottom, -dy, start.1 - self.y_lo),
            (Edge::Top, dy, self.y_hi - start.1),
        ];
        for (edge, direction, distance) in edges {
            if direction == 0.0 {
                if distance < 0.0 {
                    return None;
                }
                continue;
            }
            let t = distance / direction;
            if direction < 0.0 {
                if t > t_exit {
                    return None;
                }
                if t > t_enter {
                    t_enter = t;
                    enter_edge = Some(edge);
                }
            } else {
                if t < t_enter {
                    return None;
                }
                if t < t_exit {
                    t_exit = t;
                    exit_edge = Some(edge);
                }
            }
        }
        let at = |t: f64, edge: Option<Edge>| {
            let point = if t <= 0.0 {
                start
            } else if t >= 1.0 {
                end
            } else {
                (start.0 + t * dx, start.1 + t * dy)
            };
            let (x, y) = self.snap(point);
            match edge {
                Some(Edge::Left) => (self.x_lo, y),
                Some(Edge::Right) => (self.x_hi, y),
                Some(Edge::Bottom) => (x, self.y_lo),
                Some(Edge::Top) => (x, self.y_hi),
                None => (x, y),
            }
        };
        Some(ClippedSegment { t_enter, t_exit, enter: at(t_enter, enter_edge), exit: at(t_exit, exit_edge) })
    }
}

/// An edge of a [`Rect`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Edge {
    Left,
    Right,
    Bottom,
    Top,
}

fn flush(current: &mut Vec<(f64, f64)>, runs: &mut Vec<Vec<(f64, f64)>>) {
    if !current.is_empty() {
        runs.push(std::mem::take(current));
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const UNIT: (f64, f64) = (-1.0, 1.0);
    const WIDE: (f64, f64) = (-100.0, 100.0);

    fn check(x: &[f64], y: &[Option<f64>], y_range: (f64, f64), expected: &[&[(f64, f64)]]) {
        let runs = split_into_runs(x, y, WIDE, y_range);
        assert_eq!(runs.len(), expected.len(), "runs {runs:?}, expected {expected:?}");
        for (run, expected_run) in runs.iter().zip(expected) {
            assert_eq!(run.len(), expected_run.len(), "run {run:?} vs {expected_run:?}");
            for (p, e) in run.iter().zip(expected_run.iter()) {
                assert!((p.0 - e.0).abs() < 1e-12 && (p.1 - e.1).abs() < 1e-12, "run {run:?} vs {expected_run:?}");
            }
        }
    }

    #[test]
    fn inside_curve_is_one_run() {
        check(&[0.0, 1.0, 2.0], &[Some(0.0), Some(0.5), Some(-0.5)], UNIT, &[&[(0.0, 0.0), (1.0, 0.5), (2.0, -0.5)]]);
    }

    #[test]
    fn none_breaks_the_curve() {
        check(
            &[0.0, 1.0, 2.0, 3.0, 4.0],
            &[Some(0.0), Some(0.1), None, Some(0.2), Some(0.3)],
            UNIT,
            &[&[(0.0, 0.0), (1.0, 0.1)], &[(3.0, 0.2), (4.0, 0.3)]],
        );
    }

    #[test]
    fn non_finite_values_are_gaps() {
        check(
            &[0.0, 1.0, 2.0, 3.0, f64::NAN, 5.0, 6.0],
            &[Some(0.0), Some(0.1), Some(f64::NAN), Some(0.2), Some(0.3), Some(f64::INFINITY), Some(0.4)],
            UNIT,
            &[&[(0.0, 0.0), (1.0, 0.1)], &[(3.0, 0.2)], &[(6.0, 0.4)]],
        );
    }

    #[test]
    fn leaving_and_reentering_interpolates_the_border_points() {
        // Down through the bottom edge at x = 0.5, back up through it at x = 1.5.
        check(
            &[0.0, 1.0, 2.0],
            &[Some(0.0), Some(-2.0), Some(0.0)],
            UNIT,
            &[&[(0.0, 0.0), (0.5, -1.0)], &[(1.5, -1.0), (2.0, 0.0)]],
        );
    }

    #[test]
    fn jump_across_the_whole_range_keeps_the_middle() {
        check(&[0.0, 1.0], &[Some(2.0), Some(-2.0)], UNIT, &[&[(0.25, 1.0), (0.75, -1.0)]]);
    }

    #[test]
    fn curve_outside_gives_no_runs() {
        check(&[0.0, 1.0, 2.0], &[Some(5.0), Some(6.0), Some(3.0)], UNIT, &[]);
        check(&[0.0, 1.0], &[Some(-5.0), Some(-6.0)], UNIT, &[]);
    }

    #[test]
    fn x_range_clips_too() {
        let runs = split_into_runs(&[0.0, 1.0, 2.0], &[Some(0.0), Some(0.0), Some(0.0)], (0.5, 1.5), UNIT);
        assert_eq!(runs, vec![vec![(0.5, 0.0), (1.0, 0.0), (1.5, 0.0)]]);
    }

    #[test]
    fn points_on_the_border_are_inside() {
        check(&[0.0, 1.0, 2.0], &[Some(1.0), Some(1.0), Some(-1.0)], UNIT, &[&[(0.0, 1.0), (1.0, 1.0), (2.0, -1.0)]]);
    }

    #[test]
    fn touching_a_corner_from_outside_draws_nothing() {
        // The segment (0, 2) → (2, 0) touches the corner (1, 1) of [0,1]×[0,1] only.
        let runs = split_into_runs(&[0.0, 2.0], &[Some(2.0), Some(0.0)], (0.0, 1.0), (0.0, 1.0));
        assert!(runs.is_empty(), "{runs:?}");
    }

    #[test]
    fn bad_ranges_give_no_runs() {
        let x = [0.0, 1.0];
        let y = [Some(0.0), Some(0.0)];
        assert!(split_into_runs(&x, &y, (1.0, 0.0), UNIT).is_empty());
        assert!(split_into_runs(&x, &y, WIDE, (f64::NAN, 1.0)).is_empty());
    }

    #[test]
    fn mismatched_lengths_use_the_common_prefix() {
        let runs = split_into_runs(&[0.0, 1.0, 2.0], &[Some(0.0), Some(0.0)], WIDE, UNIT);
        assert_eq!(runs, vec![vec![(0.0, 0.0), (1.0, 0.0)]]);
    }

    /// A small deterministic generator, so the scan below needs no random entropy.
    fn next_unit(state: &mut u64) -> f64 {
        *state = state.wrapping_mul(6_364_136_223_846_793_005).wrapping_add(1_442_695_040_888_963_407);
        (*state >> 11) as f64 / (1u64 << 53) as f64
    }

    #[test]
    fn every_run_point_is_inside_and_run_ends_are_data_or_border() {
        let mut state = 7;
        for _ in 0..200 {
            let n = 2 + (next_unit(&mut state) * 40.0) as usize;
            let x: Vec<f64> = (0..n).map(|i| i as f64).collect();
            let y: Vec<Option<f64>> = (0..n)
                .map(|_| {
                    let u = next_unit(&mut state);
                    (u > 0.05).then(|| (next_unit(&mut state) - 0.5) * 6.0)
                })
                .collect();
            let x_range = (0.5, n as f64 - 1.5);
            for run in split_into_runs(&x, &y, x_range, UNIT) {
                for &(px, py) in &run {
                    assert!(px >= x_range.0 && px <= x_range.1, "{px} outside x");
                    assert!((-1.0..=1.0).contains(&py), "{py} outside y");
                }
                for &(px, py) in [run[0], run[run.len() - 1]].iter() {
                    let on_border = px == x_range.0 || px == x_range.1 || py == UNIT.0 || py == UNIT.1;
                    let is_data = px.fract() == 0.0 && y[px as usize] == Some(py);
                    assert!(on_border || is_data, "run end ({px}, {py}) is neither");
                }
            }
        }
    }
}
