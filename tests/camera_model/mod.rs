//! A second, independent model of what a real camera sees of a laser spot on an optical-lever screen,
//! with its own truth, for judging the spot finder against footage-like frames.
//!
//! It shares no code with the library's scene synthesizer; it is written from the physics of the
//! screen and the practice of camera sensors. Every frame is deterministic from the scene's seed and
//! the frame's index. What is modelled, and where each part lives:
//! - `camera`: a pinhole camera up to 40 degrees off the screen's normal, with radial distortion;
//! - `screen`: the printed ruling multiplying the light, and the room light (a lamp's fall-off,
//!   steps and ramps of its level, a passing shadow band, vignetting);
//! - `beam`: the elliptical Gaussian spot (clipping at the full well), its halo, fully developed
//!   speckle, the window ghost, a knife edge for a half-blocked beam, motion blur over the exposure;
//! - `motion`: the damped oscillation with equilibrium steps, along the scale in screen mm;
//! - `sensor`: shot and read noise, gain, 8-bit quantisation and clipping, JPEG, files.
//!
//! Each pixel's expected electrons are
//! room(u, v, t) T(u, v) vignette + sum over laser blobs of <blob T knife> speckle,
//! and the sensor turns them into a number. The truth of a frame is the projection of the beam's
//! centre on the screen, averaged over the exposure's time steps.
#![allow(dead_code)]

pub mod beam;
pub mod camera;
pub mod judge;
pub mod motion;
pub mod probe;
pub mod screen;
pub mod sensor;

use beam::{Beam, Blob, Collect};
use camera::{Camera, Pose, ScreenMap};
use motion::Swing;
use rand::rngs::SmallRng;
use rand::SeedableRng;
use screen::{RoomLight, Ruling};
use sensor::Sensor;

/// Everything that makes a sequence.
#[derive(Debug, Clone)]
pub struct Scene {
    pub camera: Camera,
    pub ruling: Ruling,
    pub light: RoomLight,
    pub beam: Beam,
    pub swing: Swing,
    pub sensor: Sensor,
    /// Where the scale's zero sits on the screen, mm; the scale runs along u.
    pub scale_origin_mm: (f64, f64),
    pub fps: f64,
    pub exposure_s: f64,
    /// Spans (from s, to s) when the beam is fully blocked.
    pub blocked: Vec<(f64, f64)>,
    /// Spans when a knife edge at the beam's centre lets only its +u half through.
    pub half_blocked: Vec<(f64, f64)>,
    pub ghost: bool,
    pub seed: u64,
}

impl Default for Scene {
    /// The default camera, graph-paper ruling, a plain room light, the default beam and swing,
    /// 1 fps with a 30 ms exposure, a ghost, no blocking.
    fn default() -> Self {
        Self {
            camera: Camera::default(),
            ruling: Ruling::default(),
            light: RoomLight::default(),
            beam: Beam::default(),
            swing: Swing::default(),
            sensor: Sensor::default(),
            scale_origin_mm: (0.0, -8.0),
            fps: 1.0,
            exposure_s: 0.03,
            blocked: Vec::new(),
            half_blocked: Vec::new(),
            ghost: true,
            seed: 1,
        }
    }
}

/// What is really in one frame.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Truth {
    pub time_s: f64,
    /// The beam's centre in pixels, averaged over the exposure (also given when blocked).
    pub centre_px: (f64, f64),
    /// The beam's centre on the screen, mm.
    pub centre_mm: (f64, f64),
    /// Laser light reaches the screen (not fully blocked; a half-blocked spot is visible).
    pub visible: bool,
    pub blocked: bool,
    pub half_blocked: bool,
    /// The ghost's centre in pixels, when there is a ghost and the beam is not blocked.
    pub ghost_px: Option<(f64, f64)>,
    /// A shadow band is on the screen.
    pub shadowed: bool,
}

/// One rendered frame: 8-bit row-major pixels and the truth.
pub struct Shot {
    pub width: usize,
    pub height: usize,
    pub pixels: Vec<u8>,
    pub truth: Truth,
}

fn within(spans: &[(f64, f64)], t: f64) -> bool {
    spans.iter().any(|&(a, b)| t >= a && t < b)
}

/// Renders frames of a scene; the camera's per-pixel screen map and the static ruling are computed
/// once.
pub struct Renderer {
    pub scene: Scene,
    pub pose: Pose,
    map: ScreenMap,
    /// Room light times ruling times vignetting per pixel, before the time-varying level and shadow.
    base: Vec<f64>,
}

impl Renderer {
    pub fn new(scene: Scene) -> Self {
        let pose = scene.camera.pose();
        let map = ScreenMap::new(&pose);
        let aim = scene.camera.aim_mm;
        let base = (0..map.uv.len())
            .map(|i| {
                let (u, v) = map.uv[i];
                if !u.is_finite() {
                    return 0.0;
                }
                let (fu, fv) = map.footprint[i];
                scene.light.lamp(u, v, aim)
                    * scene.ruling.transmission(u, v, fu, fv)
                    * map.vignette[i]
            })
            .collect();
        Self {
            scene,
            pose,
            map,
            base,
        }
    }

    /// The beam's screen centre at time t, mm.
    pub fn beam_mm(&self, t: f64) -> (f64, f64) {
        let (u0, v0) = self.scene.scale_origin_mm;
        (u0 + self.scene.swing.position(t), v0)
    }

    /// The beam's screen centres over the exposure starting at t, in steps that move the spot at
    /// most a quarter pixel (at least one step).
    pub fn exposure_path(&self, t: f64) -> Vec<(f64, f64)> {
        let te = self.scene.exposure_s;
        let (a, b) = (self.beam_mm(t), self.beam_mm(t + te));
        let px = |p: (f64, f64)| self.pose.project(p.0, p.1).unwrap_or((0.0, 0.0));
        let (pa, pb) = (px(a), px(b));
        let moved = ((pa.0 - pb.0).powi(2) + (pa.1 - pb.1).powi(2)).sqrt();
        let n = ((moved / 0.25).ceil() as usize).clamp(1, 64);
        (0..n)
            .map(|k| self.beam_mm(t + te * (k as f64 + 0.5) / n as f64))
            .collect()
    }

    fn truth(&self, t: f64, path: &[(f64, f64)]) -> Truth {
        let n = path.len() as f64;
        let (mut sx, mut sy, mut su, mut sv) = (0.0, 0.0, 0.0, 0.0);
        for &(u, v) in path {
            let (x, y) = self.pose.project(u, v).unwrap_or((f64::NAN, f64::NAN));
            sx += x;
            sy += y;
            su += u;
            sv += v;
        }
        let blocked = within(&self.scene.blocked, t);
        let half = !blocked && within(&self.scene.half_blocked, t);
        let (gu, gv) = self.scene.beam.ghost_offset_mm;
        let ghost_px = (self.scene.ghost && !blocked)
            .then(|| self.pose.project(su / n + gu, sv / n + gv))
            .flatten();
        Truth {
            time_s: t,
            centre_px: (sx / n, sy / n),
            centre_mm: (su / n, sv / n),
            visible: !blocked,
            blocked,
            half_blocked: half,
            ghost_px,
            shadowed: self.scene.light.shadow_active(t),
        }
    }

    fn laser_blobs(&self) -> (Vec<Blob>, Option<Blob>) {
        let b = &self.scene.beam;
        let main = Blob {
            centre: (0.0, 0.0),
            sigma: b.sigma_mm,
            angle: b.angle_deg.to_radians(),
            peak: b.peak_e,
        };
        let halo = Blob {
            sigma: (b.sigma_mm.0 * b.halo_scale, b.sigma_mm.1 * b.halo_scale),
            peak: b.peak_e * b.halo_fraction,
            ..main
        };
        let ghost = Blob {
            centre: b.ghost_offset_mm,
            sigma: (b.sigma_mm.0 * b.ghost_scale, b.sigma_mm.1 * b.ghost_scale),
            peak: b.peak_e * b.ghost_fraction,
            ..main
        };
        (vec![main, halo], self.scene.ghost.then_some(ghost))
    }

    /// Expected electrons per pixel of frame `index` and its truth.
    pub fn expected(&self, index: usize) -> (Vec<f64>, Truth) {
        let t = index as f64 / self.scene.fps;
        let mut rng = SmallRng::seed_from_u64(
            self.scene.seed ^ (index as u64).wrapping_mul(0x9E37_79B9_7F4A_7C15),
        );
        let path = self.exposure_path(t);
        let truth = self.truth(t, &path);
        let light = &self.scene.light;
        let level = light.level_e * light.level_factor(t);
        let shadow = light.shadow_active(t);
        let mut e: Vec<f64> = self
            .base
            .iter()
            .zip(&self.map.uv)
            .map(|(b, &(u, _))| {
                let s = if shadow {
                    light.shadow_factor(u, t)
                } else {
                    1.0
                };
                level * b * s
            })
            .collect();
        if !truth.blocked {
            let cut = truth.half_blocked.then_some((truth.centre_mm.0, 0.3));
            let collect = Collect {
                map: &self.map,
                ruling: &self.scene.ruling,
                path: &path,
                cut,
            };
            let (spot, ghost) = self.laser_blobs();
            let sk = (self.scene.beam.speckle_px, self.scene.beam.speckle_looks);
            let patches = [
                collect.patch(&self.pose, &spot[..1], sk, &mut rng),
                collect.patch(&self.pose, &spot[1..], (0.0, 1), &mut rng),
                ghost.and_then(|g| collect.patch(&self.pose, &[g], sk, &mut rng)),
            ];
            for p in patches.into_iter().flatten() {
                for yy in 0..p.h {
                    let row = (p.y0 + yy) * self.map.width + p.x0;
                    for xx in 0..p.w {
                        e[row + xx] += p.e[yy * p.w + xx];
                    }
                }
            }
        }
        (e, truth)
    }

    /// Frame `index` as the sensor reads it.
    pub fn frame(&self, index: usize) -> Shot {
        let (e, truth) = self.expected(index);
        let mut rng = SmallRng::seed_from_u64(
            !self.scene.seed ^ (index as u64).wrapping_mul(0xD1B5_4A32_D192_ED03),
        );
        let pixels = e
            .iter()
            .map(|&x| self.scene.sensor.read(x, &mut rng))
            .collect();
        Shot {
            width: self.map.width,
            height: self.map.height,
            pixels,
            truth,
        }
    }

    /// Write frames `0..n` into `dir` as PNG (quality None) or JPEG files; returns the truths.
    pub fn write_sequence(
        &self,
        dir: &std::path::Path,
        n: usize,
        jpeg_quality: Option<u8>,
    ) -> Result<Vec<Truth>, image::ImageError> {
        (0..n)
            .map(|i| {
                let s = self.frame(i);
                sensor::write_frame(dir, i, s.width, s.height, &s.pixels, jpeg_quality)?;
                Ok(s.truth)
            })
            .collect()
    }
}
