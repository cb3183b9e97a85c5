//! Growing the lattice from its seed intersection: each known intersection predicts its four
//! neighbours by continuing the local steps (which follow the perspective); a prediction is accepted
//! where the smoothed darkness peaks near it, the crossing is darker than its cells, the refined
//! position is near the prediction and every other known neighbour agrees, and no other intersection
//! already sits there.

use super::{norm, refine, Gray, P};
use std::collections::{HashMap, VecDeque};

/// Most intersections grown (a safeguard on huge images).
const MAX_NODES: usize = 40_000;

/// One found intersection.
pub(super) struct Node {
    pub p: P,
    /// Local steps to the +i and +j neighbours.
    pub u: P,
    pub v: P,
}

/// What the growth looks at: the darkness `d` (for refining), its smoothed copy `s` (for peaks and
/// contrast), the margin kept from the image edge, px, and the seed's crossing contrast.
pub(super) struct Field<'a> {
    pub d: &'a Gray,
    pub s: &'a Gray,
    pub margin: f64,
    pub c0: f64,
}

/// Position of the largest value within `r` px of `p` (integer pixels), if inside the image by `margin`.
pub(super) fn peak_near(s: &Gray, p: P, r: f64, margin: f64) -> Option<(P, f64)> {
    let mut best: Option<(P, f64)> = None;
    let ri = r.ceil() as i64;
    let (cx, cy) = (p.0.round() as i64, p.1.round() as i64);
    for y in cy - ri..=cy + ri {
        for x in cx - ri..=cx + ri {
            let (xf, yf) = (x as f64, y as f64);
            if (xf - p.0).powi(2) + (yf - p.1).powi(2) > r * r {
                continue;
            }
            if xf < margin
                || yf < margin
                || xf > s.w as f64 - 1.0 - margin
                || yf > s.h as f64 - 1.0 - margin
            {
                continue;
            }
            let v = s.at(x as usize, y as usize) as f64;
            if best.is_none_or(|b| v > b.1) {
                best = Some(((xf, yf), v));
            }
        }
    }
    best
}

/// How much darker an intersection is than the four cell centres around it (smoothed darkness).
pub(super) fn crossing_contrast(s: &Gray, c: P, u: P, v: P) -> Option<f64> {
    let centre = s.bilinear(c.0, c.1)?;
    let mut cells = 0.0;
    for (a, b) in [(0.5, 0.5), (0.5, -0.5), (-0.5, 0.5), (-0.5, -0.5)] {
        cells += s.bilinear(c.0 + a * u.0 + b * v.0, c.1 + a * u.1 + b * v.1)? / 4.0;
    }
    Some(centre - cells)
}

/// Grow the lattice breadth-first from `seed` (indices (0, 0), local steps `u`, `v`); occupied places
/// are kept on cells of half a `spacing`, so that no place gets two lattice indices.
pub(super) fn grow(f: &Field, seed: P, u: P, v: P, spacing: f64) -> HashMap<(i32, i32), Node> {
    let mut nodes: HashMap<(i32, i32), Node> = HashMap::new();
    nodes.insert((0, 0), Node { p: seed, u, v });
    let cell = 0.5 * spacing;
    let cell_of = |p: P| ((p.0 / cell).floor() as i64, (p.1 / cell).floor() as i64);
    let mut taken: HashMap<(i64, i64), P> = HashMap::new();
    taken.insert(cell_of(seed), seed);
    let mut queue = VecDeque::from([(0i32, 0i32)]);
    while let Some(key) = queue.pop_front() {
        if nodes.len() >= MAX_NODES {
            break;
        }
        for (di, dj) in [(1, 0), (-1, 0), (0, 1), (0, -1)] {
            let nk = (key.0 + di, key.1 + dj);
            if nodes.contains_key(&nk) {
                continue;
            }
            let Some((node, step)) = neighbour(f, &nodes, key, (di, dj)) else {
                continue;
            };
            let q = node.p;
            let (cx, cy) = cell_of(q);
            let clash = (cx - 1..=cx + 1)
                .flat_map(|a| (cy - 1..=cy + 1).map(move |b| (a, b)))
                .filter_map(|k| taken.get(&k))
                .any(|o| norm((o.0 - q.0, o.1 - q.1)) < 0.5 * norm(step));
            if clash {
                continue;
            }
            taken.insert((cx, cy), q);
            nodes.insert(nk, node);
            queue.push_back(nk);
        }
    }
    nodes
}

/// The neighbour of `key` one index along `(di, dj)`, and the step predicted to it; `None` when it is
/// not found or not trusted.
fn neighbour(
    f: &Field,
    nodes: &HashMap<(i32, i32), Node>,
    key: (i32, i32),
    (di, dj): (i32, i32),
) -> Option<(Node, P)> {
    let (p, u, v) = {
        let n = &nodes[&key];
        (n.p, n.u, n.v)
    };
    let nk = (key.0 + di, key.1 + dj);
    let back = (key.0 - di, key.1 - dj);
    // Continue the step we came along if known (follows the perspective), else the local vector.
    let step = match nodes.get(&back) {
        Some(b) => (p.0 - b.p.0, p.1 - b.p.1),
        None => {
            let base = if di != 0 { u } else { v };
            let sgn = (di + dj) as f64;
            (sgn * base.0, sgn * base.1)
        }
    };
    let pred = (p.0 + step.0, p.1 + step.1);
    let r = 0.3 * norm(step);
    let (cand, _) = peak_near(f.s, pred, r, f.margin)?;
    let (nu, nv) = if di != 0 {
        ((di as f64 * step.0, di as f64 * step.1), v)
    } else {
        (u, (dj as f64 * step.0, dj as f64 * step.1))
    };
    if crossing_contrast(f.s, cand, nu, nv).is_none_or(|c| c < 0.3 * f.c0) {
        return None;
    }
    let q = refine::intersection(f.d, cand, nu, nv)?;
    if norm((q.0 - pred.0, q.1 - pred.1)) > 0.35 * norm(step) {
        return None;
    }
    // Every other known neighbour must agree on where this intersection is (stops row slips).
    let disagree = [(1, 0), (-1, 0), (0, 1), (0, -1)].iter().any(|&(a, b)| {
        let k2 = (nk.0 + a, nk.1 + b);
        if k2 == key {
            return false;
        }
        nodes.get(&k2).is_some_and(|o| {
            let e = (
                o.p.0 - a as f64 * o.u.0 - b as f64 * o.v.0,
                o.p.1 - a as f64 * o.u.1 - b as f64 * o.v.1,
            );
            norm((q.0 - e.0, q.1 - e.1)) > 0.3 * norm(step)
        })
    });
    if disagree {
        return None;
    }
    Some((Node { p: q, u: nu, v: nv }, step))
}
