//! Clipping of lines and polygons to the plotting rectangle, so that data
//! outside the visible range never spill over the axes, legend or title.
//!
//! - Segments: Liang & Barsky, "A new concept and method for line clipping",
//!   ACM Transactions on Graphics 3(1), 1984 — the segment P(t) = P0 + t·(P1 − P0)
//!   is kept for t in [t_enter, t_leave], found from the four edge inequalities.
//! - Polygons: Sutherland & Hodgman, "Reentrant polygon clipping",
//!   Communications of the ACM 17(1), 1974 — clip against each edge in turn.

/// An axis-aligned rectangle [x0, x1] × [y0, y1] (x0 ≤ x1, y0 ≤ y1).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Rect {
    /// Left.
    pub x0: f64,
    /// Bottom (smaller y).
    pub y0: f64,
    /// Right.
    pub x1: f64,
    /// Top (larger y).
    pub y1: f64,
}

impl Rect {
    /// True when the point lies inside or on the boundary.
    pub fn contains(&self, p: (f64, f64)) -> bool {
        p.0 >= self.x0 && p.0 <= self.x1 && p.1 >= self.y0 && p.1 <= self.y1
    }
}

/// Clip the segment p0–p1 to `r` (Liang–Barsky). None when nothing is visible.
pub fn clip_segment(r: &Rect, p0: (f64, f64), p1: (f64, f64)) -> Option<((f64, f64), (f64, f64))> {
    let dx = p1.0 - p0.0;
    let dy = p1.1 - p0.1;
    let mut t0 = 0.0f64;
    let mut t1 = 1.0f64;
    // p·t ≤ q for each edge.
    for (p, q) in [
        (-dx, p0.0 - r.x0),
        (dx, r.x1 - p0.0),
        (-dy, p0.1 - r.y0),
        (dy, r.y1 - p0.1),
    ] {
        if p == 0.0 {
            if q < 0.0 {
                return None;
            }
        } else {
            let t = q / p;
            if p < 0.0 {
                t0 = t0.max(t);
            } else {
                t1 = t1.min(t);
            }
            if t0 > t1 {
                return None;
            }
        }
    }
    Some((
        (p0.0 + t0 * dx, p0.1 + t0 * dy),
        (p0.0 + t1 * dx, p0.1 + t1 * dy),
    ))
}

/// Clip a polyline (None entries break it) into visible runs.
pub fn clip_polyline(r: &Rect, pts: &[Option<(f64, f64)>]) -> Vec<Vec<(f64, f64)>> {
    let mut runs: Vec<Vec<(f64, f64)>> = Vec::new();
    let mut cur: Vec<(f64, f64)> = Vec::new();
    for w in pts.windows(2) {
        match (w[0], w[1]) {
            (Some(a), Some(b)) => match clip_segment(r, a, b) {
                Some((c, d)) => {
                    let joins = cur
                        .last()
                        .is_some_and(|l| (l.0 - c.0).abs() < 1e-12 && (l.1 - c.1).abs() < 1e-12);
                    if !joins {
                        if cur.len() >= 2 {
                            runs.push(std::mem::take(&mut cur));
                        }
                        cur.clear();
                        cur.push(c);
                    }
                    cur.push(d);
                }
                None => {
                    if cur.len() >= 2 {
                        runs.push(std::mem::take(&mut cur));
                    }
                    cur.clear();
                }
            },
            _ => {
                if cur.len() >= 2 {
                    runs.push(std::mem::take(&mut cur));
                }
                cur.clear();
            }
        }
    }
    if cur.len() >= 2 {
        runs.push(cur);
    }
    runs
}

/// Clip a polygon to `r` (Sutherland–Hodgman). The result may be empty.
pub fn clip_polygon(r: &Rect, poly: &[(f64, f64)]) -> Vec<(f64, f64)> {
    type Inside = fn(&Rect, (f64, f64)) -> bool;
    type Cross = fn(&Rect, (f64, f64), (f64, f64)) -> (f64, f64);
    fn at_x(a: (f64, f64), b: (f64, f64), x: f64) -> (f64, f64) {
        let t = (x - a.0) / (b.0 - a.0);
        (x, a.1 + t * (b.1 - a.1))
    }
    fn at_y(a: (f64, f64), b: (f64, f64), y: f64) -> (f64, f64) {
        let t = (y - a.1) / (b.1 - a.1);
        (a.0 + t * (b.0 - a.0), y)
    }
    let edges: [(Inside, Cross); 4] = [
        (|r, p| p.0 >= r.x0, |r, a, b| at_x(a, b, r.x0)),
        (|r, p| p.0 <= r.x1, |r, a, b| at_x(a, b, r.x1)),
        (|r, p| p.1 >= r.y0, |r, a, b| at_y(a, b, r.y0)),
        (|r, p| p.1 <= r.y1, |r, a, b| at_y(a, b, r.y1)),
    ];
    let mut out: Vec<(f64, f64)> = poly.to_vec();
    for (inside, cross) in edges {
        if out.is_empty() {
            break;
        }
        let input = std::mem::take(&mut out);
        let mut prev = input[input.len() - 1];
        for &cur in &input {
            let (ci, pi) = (inside(r, cur), inside(r, prev));
            if ci {
                if !pi {
                    out.push(cross(r, prev, cur));
                }
                out.push(cur);
            } else if pi {
                out.push(cross(r, prev, cur));
            }
            prev = cur;
        }
    }
    out
}

/// Signed area of a polygon (shoelace formula).
pub fn area(poly: &[(f64, f64)]) -> f64 {
    let n = poly.len();
    if n < 3 {
        return 0.0;
    }
    (0..n)
        .map(|i| {
            let (a, b) = (poly[i], poly[(i + 1) % n]);
            a.0 * b.1 - b.0 * a.1
        })
        .sum::<f64>()
        / 2.0
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::{Rng, SeedableRng};

    const R: Rect = Rect {
        x0: -1.0,
        y0: -0.5,
        x1: 2.0,
        y1: 1.5,
    };

    /// Direct reference: sample the segment densely and keep the inside part.
    fn visible_fraction_direct(p0: (f64, f64), p1: (f64, f64)) -> (f64, f64) {
        let n = 20000;
        let mut first = None;
        let mut last = None;
        for i in 0..=n {
            let t = i as f64 / n as f64;
            let p = (p0.0 + t * (p1.0 - p0.0), p0.1 + t * (p1.1 - p0.1));
            if R.contains(p) {
                first.get_or_insert(t);
                last = Some(t);
            }
        }
        (first.unwrap_or(f64::NAN), last.unwrap_or(f64::NAN))
    }

    #[test]
    fn segments_match_dense_sampling() {
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(11);
        for _ in 0..300 {
            let p0 = (rng.gen_range(-3.0..4.0), rng.gen_range(-3.0..4.0));
            let p1 = (rng.gen_range(-3.0..4.0), rng.gen_range(-3.0..4.0));
            let (a, b) = visible_fraction_direct(p0, p1);
            match clip_segment(&R, p0, p1) {
                None => assert!(a.is_nan() || (b - a) < 2e-4, "{p0:?} {p1:?}"),
                Some((c, d)) => {
                    let len = ((p1.0 - p0.0).powi(2) + (p1.1 - p0.1).powi(2)).sqrt();
                    let tc = ((c.0 - p0.0).powi(2) + (c.1 - p0.1).powi(2)).sqrt() / len;
                    let td = ((d.0 - p0.0).powi(2) + (d.1 - p0.1).powi(2)).sqrt() / len;
                    assert!(R.contains((c.0, c.1)) || (c.0 - c.0.clamp(R.x0, R.x1)).abs() < 1e-12);
                    if !a.is_nan() {
                        assert!(
                            (tc - a).abs() < 1e-4 && (td - b).abs() < 1e-4,
                            "{tc} {a} {td} {b}"
                        );
                    }
                }
            }
        }
    }

    #[test]
    fn polyline_breaks_at_gaps_and_exits() {
        let pts = [
            Some((0.0, 0.0)),
            Some((1.0, 1.0)),
            None,
            Some((1.5, 0.0)),
            Some((5.0, 0.0)),
            Some((1.0, 1.0)),
        ];
        let runs = clip_polyline(&R, &pts);
        assert_eq!(runs.len(), 3);
        assert_eq!(runs[0], vec![(0.0, 0.0), (1.0, 1.0)]);
        assert_eq!(runs[1], vec![(1.5, 0.0), (2.0, 0.0)]);
        assert_eq!(runs[2], vec![(2.0, 0.75), (1.0, 1.0)]);
    }

    /// Direct reference for the polygon clip: Monte Carlo area of the
    /// intersection (point in polygon by ray casting).
    #[test]
    fn polygon_area_matches_direct_count() {
        fn inside_poly(poly: &[(f64, f64)], p: (f64, f64)) -> bool {
            let mut c = false;
            let n = poly.len();
            for i in 0..n {
                let (a, b) = (poly[i], poly[(i + n - 1) % n]);
                if (a.1 > p.1) != (b.1 > p.1) && p.0 < (b.0 - a.0) * (p.1 - a.1) / (b.1 - a.1) + a.0
                {
                    c = !c;
                }
            }
            c
        }
        // A convex band shape partly outside the rectangle.
        let poly = vec![
            (-2.0, 0.0),
            (3.0, -1.0),
            (3.0, 1.0),
            (0.5, 2.5),
            (-2.0, 1.0),
        ];
        let clipped = clip_polygon(&R, &poly);
        let a = area(&clipped).abs();
        let n = 400;
        let mut hits = 0;
        for i in 0..n {
            for j in 0..n {
                let p = (
                    R.x0 + (i as f64 + 0.5) / n as f64 * (R.x1 - R.x0),
                    R.y0 + (j as f64 + 0.5) / n as f64 * (R.y1 - R.y0),
                );
                if inside_poly(&poly, p) {
                    hits += 1;
                }
            }
        }
        let direct = hits as f64 / (n * n) as f64 * (R.x1 - R.x0) * (R.y1 - R.y0);
        assert!((a - direct).abs() < 0.01 * direct, "{a} vs {direct}");
        assert!(clipped.iter().all(|&p| R.contains(p)));
        assert!(clip_polygon(&R, &[(5.0, 5.0), (6.0, 5.0), (6.0, 6.0)]).is_empty());
    }
}
