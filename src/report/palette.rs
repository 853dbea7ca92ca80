//! Colours of the report: the viridis sequential palette for fit figures,
//! and the text colour that reads on each cell.
//!
//! Viridis (van der Walt & Smith, 2015; released CC0 in matplotlib) is
//! perceptually uniform and readable with the common colour-vision
//! deficiencies and in greyscale. Its published definition is a table of 256
//! sRGB colours (matplotlib `lib/matplotlib/_cm_listed.py`,
//! `_viridis_data`); we keep every eighth entry (33 control points, the last
//! one included) and interpolate linearly between them, which stays within
//! 2/255 of the full table (checked live against matplotlib in
//! `tests/it/report.rs`).
//!
//! Text colour follows WCAG 2.x: relative luminance of sRGB and the contrast
//! ratio (L1 + 0.05) / (L2 + 0.05); of black and white, the one with the
//! higher contrast against the cell is used.
//!
//! Architecture invariant: pure functions of a number; no figure of the
//! analysis is made here.

/// (index in the 256-entry table, sRGB in 0–1) for viridis, from matplotlib's
/// `_viridis_data` (entries 0, 8, 16, …, 255).
pub const VIRIDIS_CONTROL_POINTS: [(u8, [f64; 3]); 33] = [
    (0, [0.267004, 0.004874, 0.329415]),
    (8, [0.277018, 0.050344, 0.375715]),
    (16, [0.282327, 0.094955, 0.417331]),
    (24, [0.282884, 0.135920, 0.453427]),
    (32, [0.278826, 0.175490, 0.483397]),
    (40, [0.270595, 0.214069, 0.507052]),
    (48, [0.258965, 0.251537, 0.524736]),
    (56, [0.244972, 0.287675, 0.537260]),
    (64, [0.229739, 0.322361, 0.545706]),
    (72, [0.214298, 0.355619, 0.551184]),
    (80, [0.199430, 0.387607, 0.554642]),
    (88, [0.185556, 0.418570, 0.556753]),
    (96, [0.172719, 0.448791, 0.557885]),
    (104, [0.160665, 0.478540, 0.558115]),
    (112, [0.149039, 0.508051, 0.557250]),
    (120, [0.137770, 0.537492, 0.554906]),
    (128, [0.127568, 0.566949, 0.550556]),
    (135, [0.121148, 0.592739, 0.544641]),
    (143, [0.120081, 0.622161, 0.534946]),
    (151, [0.130067, 0.651384, 0.521608]),
    (159, [0.153894, 0.680203, 0.504172]),
    (167, [0.191090, 0.708366, 0.482284]),
    (175, [0.239374, 0.735588, 0.455688]),
    (183, [0.296479, 0.761561, 0.424223]),
    (191, [0.360741, 0.785964, 0.387814]),
    (199, [0.430983, 0.808473, 0.346476]),
    (207, [0.506271, 0.828786, 0.300362]),
    (215, [0.585678, 0.846661, 0.249897]),
    (223, [0.668054, 0.861999, 0.196293]),
    (231, [0.751884, 0.874951, 0.143228]),
    (239, [0.835270, 0.886029, 0.102646]),
    (247, [0.916242, 0.896091, 0.100717]),
    (255, [0.993248, 0.906157, 0.143936]),
];

/// An sRGB colour, 8 bits a channel.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Rgb(pub u8, pub u8, pub u8);

impl Rgb {
    /// `#rrggbb`.
    pub fn hex(self) -> String {
        format!("#{:02x}{:02x}{:02x}", self.0, self.1, self.2)
    }

    /// WCAG 2.x relative luminance (sRGB linearised, Rec. 709 weights).
    pub fn relative_luminance(self) -> f64 {
        let linear = |channel: u8| {
            let c = f64::from(channel) / 255.0;
            if c <= 0.04045 {
                c / 12.92
            } else {
                ((c + 0.055) / 1.055).powf(2.4)
            }
        };
        0.2126 * linear(self.0) + 0.7152 * linear(self.1) + 0.0722 * linear(self.2)
    }
}

pub const BLACK: Rgb = Rgb(0, 0, 0);
pub const WHITE: Rgb = Rgb(255, 255, 255);

/// WCAG 2.x contrast ratio between two colours (1 to 21).
pub fn contrast_ratio(a: Rgb, b: Rgb) -> f64 {
    let (la, lb) = (a.relative_luminance(), b.relative_luminance());
    (la.max(lb) + 0.05) / (la.min(lb) + 0.05)
}

/// Black or white, whichever reads better on `background`.
pub fn text_colour_on(background: Rgb) -> Rgb {
    if contrast_ratio(background, BLACK) >= contrast_ratio(background, WHITE) {
        BLACK
    } else {
        WHITE
    }
}

/// Viridis at `t` in 0–1 (clamped; NaN gives the low end), as floats in 0–1.
pub fn viridis_float(t: f64) -> [f64; 3] {
    let t = if t.is_nan() { 0.0 } else { t.clamp(0.0, 1.0) };
    let position = t * 255.0;
    for pair in VIRIDIS_CONTROL_POINTS.windows(2) {
        let [(low_index, low), (high_index, high)] = [pair[0], pair[1]];
        let (low_at, high_at) = (f64::from(low_index), f64::from(high_index));
        if position <= high_at {
            let share = (position - low_at) / (high_at - low_at);
            return [0, 1, 2].map(|channel| low[channel] + share * (high[channel] - low[channel]));
        }
    }
    VIRIDIS_CONTROL_POINTS[VIRIDIS_CONTROL_POINTS.len() - 1].1
}

/// Viridis at `t` in 0–1, rounded to 8-bit sRGB.
pub fn viridis(t: f64) -> Rgb {
    let [r, g, b] = viridis_float(t).map(|c| (c * 255.0).round().clamp(0.0, 255.0) as u8);
    Rgb(r, g, b)
}

/// The colour of a fit figure (0–100): dark violet for poor, yellow for good.
pub fn fit_colour(fit: f64) -> Rgb {
    viridis(fit / 100.0)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn wcag_contrast_of_black_on_white_is_21() {
        // WCAG 2.1, definition of contrast ratio: black on white is 21:1.
        assert!((contrast_ratio(BLACK, WHITE) - 21.0).abs() < 1e-9);
        assert!((contrast_ratio(WHITE, WHITE) - 1.0).abs() < 1e-12);
    }

    #[test]
    fn viridis_ends_are_matplotlibs_first_and_last_entries() {
        // matplotlib _viridis_data[0] = (0.267004, 0.004874, 0.329415) → #440154,
        // _viridis_data[255] = (0.993248, 0.906157, 0.143936) → #fde725 (the
        // hex codes matplotlib's documentation lists for viridis's ends).
        assert_eq!(viridis(0.0).hex(), "#440154");
        assert_eq!(viridis(1.0).hex(), "#fde725");
    }

    #[test]
    fn every_cell_text_reaches_wcag_aa_contrast() {
        // WCAG 2.1 SC 1.4.3 (AA): at least 4.5:1 for normal text.
        for step in 0..=1000 {
            let background = viridis(f64::from(step) / 1000.0);
            let ratio = contrast_ratio(background, text_colour_on(background));
            assert!(ratio >= 4.5, "{} gives {ratio:.2}", background.hex());
        }
    }
}
