//! Light and dark colour themes.
//!
//! The palette is our own. Curve colours lead with a blue and an orange, a pair that stays
//! distinct under the common red-green colour-vision deficiencies (common practice in
//! scientific plotting), then a bluish green and a reddish purple. The dark theme uses
//! lighter tints of the same hues so that they keep their contrast on a dark background.

use plotters::style::RGBColor;

/// The colour theme of a chart.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default)]
pub enum Theme {
    /// Dark curves on a white background.
    #[default]
    Light,
    /// Light curves on a near-black background.
    Dark,
}

/// The colours a theme uses for each part of the chart.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ThemeColours {
    /// Fill of the whole chart area.
    pub background: RGBColor,
    /// Title, tick labels, axis descriptions and legend text.
    pub text: RGBColor,
    /// Plot frame and axis lines.
    pub axis: RGBColor,
    /// Grid lines at labelled ticks.
    pub grid_major: RGBColor,
    /// Minor grid lines (2..9 within a decade on log axes).
    pub grid_minor: RGBColor,
    /// The dashed ideal (target) curve.
    pub ideal: RGBColor,
    /// The vertical frequency cursor.
    pub cursor: RGBColor,
    /// Curve colours, used in turn by primary and overlay series.
    pub series: [RGBColor; 4],
}

impl Theme {
    /// Returns the colours of this theme.
    pub fn colours(self) -> ThemeColours {
        match self {
            Theme::Light => ThemeColours {
                background: RGBColor(255, 255, 255),
                text: RGBColor(34, 38, 46),
                axis: RGBColor(120, 126, 136),
                grid_major: RGBColor(204, 209, 217),
                grid_minor: RGBColor(234, 237, 242),
                ideal: RGBColor(92, 98, 110),
                cursor: RGBColor(168, 30, 110),
                series: [RGBColor(22, 96, 186), RGBColor(222, 112, 14), RGBColor(18, 140, 112), RGBColor(150, 72, 160)],
            },
            Theme::Dark => ThemeColours {
                background: RGBColor(22, 25, 31),
                text: RGBColor(224, 227, 233),
                axis: RGBColor(130, 136, 148),
                grid_major: RGBColor(66, 72, 84),
                grid_minor: RGBColor(40, 45, 54),
                ideal: RGBColor(176, 182, 194),
                cursor: RGBColor(240, 120, 190),
                series: [
                    RGBColor(104, 166, 246),
                    RGBColor(250, 166, 76),
                    RGBColor(80, 204, 170),
                    RGBColor(204, 150, 226),
                ],
            },
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Relative luminance and contrast ratio as defined by WCAG 2.x (W3C).
    fn luminance(colour: RGBColor) -> f64 {
        let channel = |c: u8| {
            let c = f64::from(c) / 255.0;
            if c <= 0.04045 {
                c / 12.92
            } else {
                ((c + 0.055) / 1.055).powf(2.4)
            }
        };
        0.2126 * channel(colour.0) + 0.7152 * channel(colour.1) + 0.0722 * channel(colour.2)
    }

    fn contrast(a: RGBColor, b: RGBColor) -> f64 {
        let (la, lb) = (luminance(a), luminance(b));
        (la.max(lb) + 0.05) / (la.min(lb) + 0.05)
    }

    #[test]
    fn curves_and_text_stand_out_from_the_background() {
        for theme in [Theme::Light, Theme::Dark] {
            let colours = theme.colours();
            // Source: W3C WCAG 2.1, success criteria 1.4.3 (4.5:1 text) and 1.4.11 (3:1
            // graphical objects).
            assert!(contrast(colours.text, colours.background) >= 4.5, "{theme:?} text");
            for curve in colours.series.iter().chain([&colours.ideal, &colours.cursor]) {
                assert!(contrast(*curve, colours.background) >= 3.0, "{theme:?} curve {curve:?}");
            }
        }
    }

    #[test]
    fn curve_colours_are_distinct() {
        for theme in [Theme::Light, Theme::Dark] {
            let colours = theme.colours();
            let mut all = colours.series.to_vec();
            all.extend([colours.ideal, colours.cursor, colours.grid_major]);
            for (i, a) in all.iter().enumerate() {
                for b in &all[i + 1..] {
                    assert_ne!(a, b, "{theme:?}");
                }
            }
        }
    }
}
