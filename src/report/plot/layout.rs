//! Pixel geometry of a figure's annotations: where the legend box goes so that it covers
//! no data, and how wide a text is taken to be.
//!
//! Text extents are estimated, not measured (plotters is built without fonts): a line of
//! text is `0.6 × font-size` wide per character and one font-size high (common practice,
//! no source). The same estimate sizes the legend box and the reference-label margin.

/// Width of one character as a fraction of the font size (estimate; module docs).
pub(crate) const CHAR_WIDTH: f64 = 0.6;

/// Estimated width in pixels of `text` at `font_px` (module docs).
pub(crate) fn text_width(text: &str, font_px: f64) -> f64 {
    text.chars().count() as f64 * CHAR_WIDTH * font_px
}

/// An axis-aligned rectangle in pixels (y downwards), `x0 ≤ x1`, `y0 ≤ y1`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Rect {
    pub x0: f64,
    pub y0: f64,
    pub x1: f64,
    pub y1: f64,
}

impl Rect {
    /// The rectangle of corner `(x, y)` and size `w × h`.
    pub fn at(x: f64, y: f64, w: f64, h: f64) -> Self {
        Self {
            x0: x,
            y0: y,
            x1: x + w,
            y1: y + h,
        }
    }

    /// The rectangle grown by `d` on every side.
    pub fn grown(&self, d: f64) -> Self {
        Self {
            x0: self.x0 - d,
            y0: self.y0 - d,
            x1: self.x1 + d,
            y1: self.y1 + d,
        }
    }

    /// True when the rectangles share interior points.
    pub fn overlaps(&self, o: &Rect) -> bool {
        self.x0 < o.x1 && o.x0 < self.x1 && self.y0 < o.y1 && o.y0 < self.y1
    }

    /// True when the point lies inside or on the border.
    pub fn contains(&self, (x, y): (f64, f64)) -> bool {
        x >= self.x0 && x <= self.x1 && y >= self.y0 && y <= self.y1
    }

    /// True when the segment `a`–`b` has a point inside the rectangle (Liang–Barsky
    /// clipping; common practice, no source).
    pub fn meets_segment(&self, a: (f64, f64), b: (f64, f64)) -> bool {
        let (dx, dy) = (b.0 - a.0, b.1 - a.1);
        let (mut t0, mut t1) = (0.0f64, 1.0f64);
        for (p, q) in [
            (-dx, a.0 - self.x0),
            (dx, self.x1 - a.0),
            (-dy, a.1 - self.y0),
            (dy, self.y1 - a.1),
        ] {
            if p == 0.0 {
                if q < 0.0 {
                    return false;
                }
            } else {
                let t = q / p;
                if p < 0.0 {
                    t0 = t0.max(t);
                } else {
                    t1 = t1.min(t);
                }
                if t0 > t1 {
                    return false;
                }
            }
        }
        true
    }
}

/// What a legend box must not cover, in pixels: marker centres with their radius, line
/// segments (curves, error bars) and filled rectangles (histogram bars).
#[derive(Debug, Clone, Default)]
pub(crate) struct Obstacles {
    pub markers: Vec<(f64, f64, f64)>,
    pub segments: Vec<((f64, f64), (f64, f64))>,
    pub rects: Vec<Rect>,
}

impl Obstacles {
    /// True when `r` covers any marker (its disc), segment or rectangle.
    pub fn hit(&self, r: &Rect) -> bool {
        self.markers
            .iter()
            .any(|&(x, y, rad)| r.grown(rad).contains((x, y)))
            || self.segments.iter().any(|&(a, b)| r.meets_segment(a, b))
            || self.rects.iter().any(|b| r.overlaps(b))
    }
}

/// A corner of the plot area.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Corner {
    UpperRight,
    UpperLeft,
    LowerRight,
    LowerLeft,
}

/// Gap in pixels between a legend box in a corner and the plot area's edges.
pub(crate) const INSET: f64 = 6.0;

/// The box of size `(w, h)` in `corner` of `area`, [`INSET`] from its edges.
pub(crate) fn corner_box(area: &Rect, (w, h): (f64, f64), corner: Corner) -> Rect {
    let x = match corner {
        Corner::UpperLeft | Corner::LowerLeft => area.x0 + INSET,
        _ => area.x1 - INSET - w,
    };
    let y = match corner {
        Corner::UpperLeft | Corner::UpperRight => area.y0 + INSET,
        _ => area.y1 - INSET - h,
    };
    Rect::at(x, y, w, h)
}

/// The first corner, `preferred` first and then upper right, upper left, lower right,
/// lower left, whose legend box of size `size` fits inside `area` and covers none of the
/// obstacles (with a 2 px clearance); `None` when every corner covers data.
pub(crate) fn free_corner(
    area: &Rect,
    size: (f64, f64),
    preferred: Corner,
    obstacles: &Obstacles,
) -> Option<Rect> {
    if size.0 + 2.0 * INSET > area.x1 - area.x0 || size.1 + 2.0 * INSET > area.y1 - area.y0 {
        return None;
    }
    let order = [
        preferred,
        Corner::UpperRight,
        Corner::UpperLeft,
        Corner::LowerRight,
        Corner::LowerLeft,
    ];
    order
        .into_iter()
        .map(|c| corner_box(area, size, c))
        .find(|b| !obstacles.hit(&b.grown(2.0)))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn corners_avoid_data() {
        // Common practice, no source: geometry checked directly on invented boxes.
        let area = Rect::at(0.0, 0.0, 300.0, 200.0);
        let mut obs = Obstacles::default();
        // a marker in the upper right: the preferred corner is skipped
        obs.markers.push((280.0, 20.0, 4.0));
        let b = free_corner(&area, (100.0, 50.0), Corner::UpperRight, &obs).unwrap();
        assert_eq!(b, corner_box(&area, (100.0, 50.0), Corner::UpperLeft));
        // a line crossing the whole top (no vertex inside either upper box)
        obs.segments.push(((-10.0, 30.0), (310.0, 30.0)));
        let b = free_corner(&area, (100.0, 50.0), Corner::UpperLeft, &obs).unwrap();
        assert_eq!(b, corner_box(&area, (100.0, 50.0), Corner::LowerRight));
        // bars along the bottom: no corner is free
        obs.rects.push(Rect::at(0.0, 120.0, 300.0, 80.0));
        assert!(free_corner(&area, (100.0, 50.0), Corner::UpperRight, &obs).is_none());
        // a box wider than the area never fits
        let empty = Obstacles::default();
        assert!(free_corner(&area, (295.0, 50.0), Corner::UpperRight, &empty).is_none());
        // a segment that passes beside the box does not hit it
        let r = Rect::at(10.0, 10.0, 10.0, 10.0);
        assert!(!r.meets_segment((0.0, 0.0), (30.0, 5.0)));
        assert!(r.meets_segment((0.0, 0.0), (30.0, 30.0)));
        assert!(r.meets_segment((12.0, 12.0), (13.0, 13.0)));
    }
}
