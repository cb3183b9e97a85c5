//! The spot finder and a plain thresholded centroid measured on the model's frames: the measured
//! run's scene, both methods on its frames as stored losslessly and as JPEG 85, and the figures
//! (RMS error, mean error after the light step, blocked frames reported found, ghost taken).

use super::screen::{RoomLight, Ruling, Shadow};
use super::sensor::jpeg_round_trip;
use super::{Renderer, Scene, Truth};
use spotlever::frame::Plane;
use spotlever::spot::{SpotConfig, SpotStatus, Tracker};

/// Frames in the measured run, 1 fps.
pub const FRAMES: usize = 400;
/// The room light steps up by 1.6 here (a ceiling light switched on), s.
pub const LIGHT_STEP_S: f64 = 200.0;
/// The beam is blocked over [320, 340) s, with a half-blocked spot for 4 s either side.
pub const BLOCKED: (f64, f64) = (320.0, 340.0);

/// The measured run: the default camera (30 degrees off-axis), graph-paper ruling, speckle, a ghost,
/// a light step at 200 s and a 10 % ramp over the run, a shadow band crossing the screen from 60 s
/// to 120 s, the swing's equilibrium stepping at 130 s and 270 s, and the beam blocked.
pub fn measured_scene() -> Scene {
    Scene {
        light: RoomLight {
            steps: vec![(LIGHT_STEP_S, 1.6)],
            ramps: vec![(0.0, FRAMES as f64, 0.1)],
            shadows: vec![Shadow {
                start_s: 60.0,
                from_u_mm: -250.0,
                speed_mm_s: 8.0,
                width_mm: 60.0,
                edge_mm: 10.0,
                depth: 0.6,
                duration_s: 60.0,
            }],
            ..RoomLight::default()
        },
        blocked: vec![BLOCKED],
        half_blocked: vec![(BLOCKED.0 - 4.0, BLOCKED.0), (BLOCKED.1, BLOCKED.1 + 4.0)],
        seed: 2026,
        ..Scene::default()
    }
}

/// Half-size of the plain centroid's window, px: three of the spot's sigmas (about 4 px along the
/// scale here), enough to hold everything above half its peak.
pub const CENTROID_HALF: usize = 12;

/// The plain thresholded centroid: the brightest 8 x 8 block, then in a 25 x 25 window around it
/// the pixels above half the peak over the median of the window's border, weighted by their excess,
/// first moments; once more in a window around that answer.
pub fn plain_centroid(w: usize, h: usize, px: &[u8]) -> Option<(f64, f64)> {
    let b = 8;
    let mut best = (0u32, 0usize, 0usize);
    for by in 0..h / b {
        for bx in 0..w / b {
            let mut s = 0u32;
            for y in by * b..(by + 1) * b {
                s += px[y * w + bx * b..y * w + (bx + 1) * b]
                    .iter()
                    .map(|&p| p as u32)
                    .sum::<u32>();
            }
            if s > best.0 {
                best = (s, bx, by);
            }
        }
    }
    let mut c = ((best.1 * b + b / 2) as f64, (best.2 * b + b / 2) as f64);
    for _ in 0..2 {
        c = window_centroid(w, h, px, c, CENTROID_HALF)?;
    }
    Some(c)
}

pub fn window_centroid(
    w: usize,
    h: usize,
    px: &[u8],
    c: (f64, f64),
    r: usize,
) -> Option<(f64, f64)> {
    let x0 = (c.0.round() as usize).saturating_sub(r);
    let y0 = (c.1.round() as usize).saturating_sub(r);
    let (x1, y1) = ((x0 + 2 * r).min(w - 1), (y0 + 2 * r).min(h - 1));
    let mut border = Vec::new();
    let mut peak = 0u8;
    for y in y0..=y1 {
        for x in x0..=x1 {
            let p = px[y * w + x];
            peak = peak.max(p);
            if x == x0 || x == x1 || y == y0 || y == y1 {
                border.push(p);
            }
        }
    }
    border.sort_unstable();
    let bg = border[border.len() / 2] as f64;
    let half = bg + (peak as f64 - bg) / 2.0;
    let (mut s, mut sx, mut sy) = (0.0, 0.0, 0.0);
    for y in y0..=y1 {
        for x in x0..=x1 {
            let p = px[y * w + x] as f64;
            if p > half {
                s += p - bg;
                sx += (p - bg) * x as f64;
                sy += (p - bg) * y as f64;
            }
        }
    }
    (s > 0.0).then(|| (sx / s, sy / s))
}

/// One method's answers on one sequence.
#[derive(Debug, Default, Clone)]
pub struct Answers {
    pub positions: Vec<Option<(f64, f64)>>,
    pub statuses: Vec<Option<SpotStatus>>,
}

/// Both methods on both stored forms of the same frames.
pub struct Run {
    pub truths: Vec<Truth>,
    /// (spotlever PNG, centroid PNG, spotlever JPEG 85, centroid JPEG 85).
    pub answers: [Answers; 4],
}

/// Frames `frames` of the measured scene through fresh trackers and the plain centroid, as stored
/// losslessly and, when `jpeg`, also as JPEG 85 (answers 2 and 3 stay empty otherwise).
pub fn run_sequence(frames: std::ops::Range<usize>, jpeg: bool) -> Run {
    run_scene(measured_scene(), frames, jpeg)
}

/// As [`run_sequence`], on any scene (with the measured run's timing of light step and blocking
/// assumed by [`figures`]).
pub fn run_scene(scene: Scene, frames: std::ops::Range<usize>, jpeg: bool) -> Run {
    let r = Renderer::new(scene);
    let (w, h) = (r.scene.camera.width, r.scene.camera.height);
    let mut trackers = [
        Tracker::new(SpotConfig::default()),
        Tracker::new(SpotConfig::default()),
    ];
    let mut answers: [Answers; 4] = Default::default();
    let mut truths = Vec::with_capacity(frames.len());
    for i in frames {
        let shot = r.frame(i);
        let mut forms = vec![shot.pixels];
        if jpeg {
            forms.push(jpeg_round_trip(w, h, &forms[0], 85).expect("JPEG round trip of a frame"));
        }
        for (k, px) in forms.into_iter().enumerate() {
            let centroid = plain_centroid(w, h, &px);
            let plane = Plane::from_u8_vec(w, h, px).expect("frame size");
            let fix = trackers[k].process(&plane);
            let a = &mut answers[2 * k];
            a.positions.push(fix.position.map(|p| (p.x, p.y)));
            a.statuses.push(Some(fix.status));
            let a = &mut answers[2 * k + 1];
            a.positions.push(centroid);
            a.statuses.push(None);
        }
        truths.push(shot.truth);
    }
    Run { truths, answers }
}

/// The figures of one method on one sequence.
#[derive(Debug, Clone, Copy)]
pub struct Figures {
    /// RMS radial error over visible, unclipped-by-a-knife frames with an answer, px.
    pub rms: f64,
    /// Frames (visible, whole spot) without an answer.
    pub missed: usize,
    /// RMS over the same frames before the light step, and after it, px.
    pub rms_before: f64,
    pub rms_after: f64,
    /// Mean error vector's length over the frames after the light step up to the half-block, px.
    pub bias_after_step: f64,
    /// Its standard error from the scatter of the errors (speckle dominates it), px.
    pub bias_se: f64,
    /// Blocked frames answered `Ok` or `Saturated` (the finder only).
    pub blocked_found: usize,
    pub blocked: usize,
    /// Visible frames whose answer is nearer the ghost than the spot.
    pub on_ghost: usize,
}

pub fn figures(run: &Run, a: &Answers) -> Figures {
    let (mut se, mut n, mut missed, mut on_ghost) = (0.0, 0usize, 0usize, 0usize);
    let (mut bx, mut by, mut bn) = (0.0, 0.0, 0usize);
    let (mut se0, mut n0, mut se1) = (0.0, 0usize, 0.0);
    let mut after = Vec::new();
    let (mut blocked, mut blocked_found) = (0usize, 0usize);
    for (i, t) in run.truths.iter().enumerate() {
        if t.blocked {
            blocked += 1;
            if matches!(a.statuses[i], Some(SpotStatus::Ok | SpotStatus::Saturated)) {
                blocked_found += 1;
            }
            continue;
        }
        if t.half_blocked {
            continue;
        }
        let Some(p) = a.positions[i] else {
            missed += 1;
            continue;
        };
        let (dx, dy) = (p.0 - t.centre_px.0, p.1 - t.centre_px.1);
        se += dx * dx + dy * dy;
        n += 1;
        if let Some(g) = t.ghost_px {
            if (p.0 - g.0).hypot(p.1 - g.1) < dx.hypot(dy) {
                on_ghost += 1;
            }
        }
        if t.time_s < LIGHT_STEP_S {
            se0 += dx * dx + dy * dy;
            n0 += 1;
        } else {
            se1 += dx * dx + dy * dy;
        }
        if t.time_s >= LIGHT_STEP_S && t.time_s < BLOCKED.0 - 4.0 {
            bx += dx;
            by += dy;
            after.push((dx, dy));
            bn += 1;
        }
    }
    Figures {
        rms: (se / n.max(1) as f64).sqrt(),
        rms_before: (se0 / n0.max(1) as f64).sqrt(),
        rms_after: (se1 / (n - n0).max(1) as f64).sqrt(),
        missed,
        bias_after_step: (bx / bn as f64).hypot(by / bn as f64),
        bias_se: {
            let (mx, my) = (bx / bn as f64, by / bn as f64);
            let ss: f64 = after
                .iter()
                .map(|e| (e.0 - mx).powi(2) + (e.1 - my).powi(2))
                .sum();
            (ss / (bn as f64 - 1.0) / bn as f64).sqrt()
        },
        blocked_found,
        blocked,
        on_ghost,
    }
}

pub fn print_table(run: &Run) {
    let names = [
        "spotlever, PNG",
        "centroid, PNG",
        "spotlever, JPEG 85",
        "centroid, JPEG 85",
    ];
    eprintln!(
        "\n{FRAMES} frames 1280 x 720 at 1 fps (camera model: 30 deg off-axis, ruling, speckle, ghost, \
         light step at {LIGHT_STEP_S} s, shadow 60-120 s, beam blocked {:.0}-{:.0} s)",
        BLOCKED.0, BLOCKED.1
    );
    eprintln!(
        "{:<20} {:>8} {:>8} {:>8} {:>7} {:>15} {:>14} {:>9}",
        "method",
        "RMS px",
        "before",
        "after",
        "missed",
        "bias px (se)",
        "blocked found",
        "on ghost"
    );
    for (name, a) in names.iter().zip(&run.answers) {
        let f = figures(run, a);
        let blocked = if a.statuses[0].is_some() {
            format!("{} of {}", f.blocked_found, f.blocked)
        } else {
            "-".to_string()
        };
        eprintln!(
            "{name:<20} {:>8.3} {:>8.3} {:>8.3} {:>7} {:>15} {:>14} {:>9}",
            f.rms,
            f.rms_before,
            f.rms_after,
            f.missed,
            format!("{:.3} ({:.3})", f.bias_after_step, f.bias_se),
            blocked,
            f.on_ghost
        );
    }
    for (name, k) in [("PNG", 0), ("JPEG 85", 2)] {
        let mut statuses = std::collections::BTreeMap::new();
        for (i, t) in run.truths.iter().enumerate() {
            if t.blocked {
                let st = run.answers[k].statuses[i].map_or("-", SpotStatus::as_str);
                statuses.entry(st).or_insert_with(Vec::new).push(i);
            }
        }
        eprintln!("spotlever {name}, blocked frames by status: {statuses:?}");
    }
    let missed: Vec<usize> = (0..run.truths.len())
        .filter(|&i| run.truths[i].visible && run.answers[0].positions[i].is_none())
        .collect();
    eprintln!("spotlever PNG, visible frames without a position: {missed:?}\n");
}

/// Print the run's figures (lossless frames) with one effect of the model removed or changed at a
/// time.
pub fn print_effects() {
    type Change = fn(&mut Scene);
    let variants: [(&str, Change); 6] = [
        ("as measured", |_| {}),
        ("no speckle", |s| s.beam.speckle_px = 0.0),
        ("no ghost", |s| s.ghost = false),
        ("2-look speckle", |s| s.beam.speckle_looks = 2),
        ("plain paper", |s| s.ruling = Ruling::none()),
        ("steady light", |s| {
            s.light.steps.clear();
            s.light.ramps.clear();
            s.light.shadows.clear();
        }),
    ];
    eprintln!(
        "\nlossless frames 0..{FRAMES}, one effect removed\n{:<14} {:>13} {:>13} {:>15} {:>15}",
        "scene", "spotlever RMS", "centroid RMS", "spotlever bias", "centroid bias"
    );
    for (name, change) in variants {
        let mut scene = measured_scene();
        change(&mut scene);
        let r = run_scene(scene, 0..FRAMES, false);
        let (f, c) = (figures(&r, &r.answers[0]), figures(&r, &r.answers[1]));
        eprintln!(
            "{name:<14} {:>13.3} {:>13.3} {:>15.3} {:>15.3}",
            f.rms, c.rms, f.bias_after_step, c.bias_after_step
        );
    }
}
