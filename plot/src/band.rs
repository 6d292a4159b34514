//! Shaded bands: the region between a lower and an upper curve, filled behind the curves of a
//! panel (for example the min/max and percentile envelopes of a tolerance run).
//!
//! A band is drawn as one filled polygon per run of points where both edges are known: the upper
//! edge forwards, then the lower edge backwards. A `None` (or non-finite) edge value breaks the
//! band, as a gap breaks a curve. Each polygon is clipped at the plotting rectangle with the
//! Sutherland–Hodgman method (I. E. Sutherland and G. W. Hodgman, "Reentrant polygon clipping",
//! Communications of the ACM 17(1), 1974), which is exact for a convex clip window such as the
//! plot rectangle; so a band that leaves the axis range stops at the border instead of being
//! flattened onto it.

/// A shaded band of a panel.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Band<'a> {
    /// Legend text; an empty label keeps the band out of the legend.
    pub label: &'a str,
    /// Sample frequencies in Hz, as for a [`crate::Series`].
    pub f_hz: &'a [f64],
    /// The lower edge, one value per frequency; `None` breaks the band.
    pub lower: &'a [Option<f64>],
    /// The upper edge, one value per frequency; `None` breaks the band.
    pub upper: &'a [Option<f64>],
    /// How the band is shaded.
    pub style: BandStyle,
}

/// How a band is shaded. Both take the colour of the panel's first curve.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum BandStyle {
    /// A wide band (such as min/max over all trials): light shading.
    Outer,
    /// A narrower band inside it (such as a percentile band): stronger shading.
    Inner,
}

impl BandStyle {
    /// The fill opacity.
    pub fn alpha(self) -> f64 {
        match self {
            BandStyle::Outer => 0.16,
            BandStyle::Inner => 0.30,
        }
    }
}

/// The polygons that fill a band between `lower` and `upper` at abscissae `x`, in axis
/// coordinates, clipped at `x_range × y_range`. Runs are split at any point where an edge or x
/// is missing or not finite; a run of one point has no area and gives nothing. If the slices
/// differ in length only the common prefix is used. Every returned vertex lies inside the
/// rectangle; ranges that are not finite or have `low > high` give no polygons.
pub fn band_polygons(
    x: &[f64],
    lower: &[Option<f64>],
    upper: &[Option<f64>],
    x_range: (f64, f64),
    y_range: (f64, f64),
) -> Vec<Vec<(f64, f64)>> {
    let finite_range = [x_range.0, x_range.1, y_range.0, y_range.1].iter().all(|v| v.is_finite());
    if !finite_range || x_range.0 > x_range.1 || y_range.0 > y_range.1 {
        return Vec::new();
    }
    let n = x.len().min(lower.len()).min(upper.len());
    let mut polygons = Vec::new();
    let mut run: Vec<(f64, f64, f64)> = Vec::new();
    let mut flush = |run: &mut Vec<(f64, f64, f64)>| {
        if run.len() >= 2 {
            let mut outline: Vec<(f64, f64)> = run.iter().map(|&(x, _, hi)| (x, hi)).collect();
            outline.extend(run.iter().rev().map(|&(x, lo, _)| (x, lo)));
            let clipped = clip_polygon(&outline, x_range, y_range);
            if clipped.len() >= 3 {
                polygons.push(clipped);
            }
        }
        run.clear();
    };
    for i in 0..n {
        match (lower[i], upper[i]) {
            (Some(lo), Some(hi)) if x[i].is_finite() && lo.is_finite() && hi.is_finite() => {
                run.push((x[i], lo.min(hi), lo.max(hi)));
            }
            _ => flush(&mut run),
        }
    }
    flush(&mut run);
    polygons
}

/// Sutherland–Hodgman: clips `polygon` against each edge of the rectangle in turn.
fn clip_polygon(polygon: &[(f64, f64)], x_range: (f64, f64), y_range: (f64, f64)) -> Vec<(f64, f64)> {
    // Each edge: is a point inside, and where does a segment cross the edge's line.
    type Inside = fn((f64, f64), f64) -> bool;
    type Cross = fn((f64, f64), (f64, f64), f64) -> (f64, f64);
    let cross_x: Cross = |a, b, x| (x, a.1 + (b.1 - a.1) * (x - a.0) / (b.0 - a.0));
    let cross_y: Cross = |a, b, y| (a.0 + (b.0 - a.0) * (y - a.1) / (b.1 - a.1), y);
    let edges: [(Inside, Cross, f64); 4] = [
        (|p, x| p.0 >= x, cross_x, x_range.0),
        (|p, x| p.0 <= x, cross_x, x_range.1),
        (|p, y| p.1 >= y, cross_y, y_range.0),
        (|p, y| p.1 <= y, cross_y, y_range.1),
    ];
    let mut output = polygon.to_vec();
    for (inside, cross, limit) in edges {
        let input = std::mem::take(&mut output);
        let Some(&last) = input.last() else { break };
        let mut previous = last;
        for &point in &input {
            match (inside(point, limit), inside(previous, limit)) {
                (true, true) => output.push(point),
                (true, false) => {
                    output.push(cross(previous, point, limit));
                    output.push(point);
                }
                (false, true) => output.push(cross(previous, point, limit)),
                (false, false) => {}
            }
            previous = point;
        }
    }
    // Rounding can leave a crossing a hair outside; pull it onto the border.
    output.iter().map(|&(x, y)| (x.clamp(x_range.0, x_range.1), y.clamp(y_range.0, y_range.1))).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn area(polygon: &[(f64, f64)]) -> f64 {
        // Shoelace formula (common practice).
        let n = polygon.len();
        0.5 * (0..n)
            .map(|i| {
                let (a, b) = (polygon[i], polygon[(i + 1) % n]);
                a.0 * b.1 - b.0 * a.1
            })
            .sum::<f64>()
            .abs()
    }

    #[test]
    fn a_band_inside_the_rectangle_is_one_polygon_of_its_own_area() {
        let x = [0.0, 1.0, 2.0];
        let lower = [Some(-1.0), Some(-1.0), Some(-1.0)];
        let upper = [Some(1.0), Some(1.0), Some(1.0)];
        let polygons = band_polygons(&x, &lower, &upper, (0.0, 2.0), (-5.0, 5.0));
        assert_eq!(polygons.len(), 1);
        assert!((area(&polygons[0]) - 4.0).abs() < 1e-12);
    }

    #[test]
    fn a_gap_splits_the_band() {
        let x = [0.0, 1.0, 2.0, 3.0, 4.0];
        let lower = [Some(0.0), Some(0.0), None, Some(0.0), Some(0.0)];
        let upper = [Some(1.0); 5];
        let polygons = band_polygons(&x, &lower, &upper, (0.0, 4.0), (-5.0, 5.0));
        assert_eq!(polygons.len(), 2);
        for polygon in &polygons {
            assert!((area(polygon) - 1.0).abs() < 1e-12);
        }
        // NaN breaks it the same way; a lone point has no area.
        let lower = [Some(0.0), Some(f64::NAN), Some(0.0), Some(f64::NAN), Some(0.0)];
        assert!(band_polygons(&x, &lower, &upper, (0.0, 4.0), (-5.0, 5.0)).is_empty());
    }

    #[test]
    fn a_band_beyond_the_axis_range_is_clipped_at_the_border() {
        // Upper edge at +10 everywhere, axis up to +2: the band fills from 0 to 2 only.
        let x = [0.0, 1.0, 2.0];
        let lower = [Some(0.0); 3];
        let upper = [Some(10.0); 3];
        let polygons = band_polygons(&x, &lower, &upper, (0.0, 2.0), (-1.0, 2.0));
        assert_eq!(polygons.len(), 1);
        assert!(polygons[0].iter().all(|&(x, y)| (0.0..=2.0).contains(&x) && (-1.0..=2.0).contains(&y)));
        assert!((area(&polygons[0]) - 4.0).abs() < 1e-12);
        // Wholly outside: nothing.
        let high = [Some(20.0); 3];
        assert!(band_polygons(&x, &upper, &high, (0.0, 2.0), (-1.0, 2.0)).is_empty());
        // Swapped edges are put in order.
        let polygons = band_polygons(&x, &upper, &lower, (0.0, 2.0), (-1.0, 2.0));
        assert!((area(&polygons[0]) - 4.0).abs() < 1e-12);
        // Bad ranges give nothing, never NaN.
        assert!(band_polygons(&x, &lower, &upper, (0.0, f64::NAN), (-1.0, 2.0)).is_empty());
    }
}
