//! Measurements of the model's own rendered light, for its checks: the image-plane moments of a
//! patch, the projection's Jacobian, and the centroid a spot's image has in the continuum; and the
//! plain scenes those checks render.

use super::beam::Blob;
use super::camera::{Camera, Pose};
use super::screen::{RoomLight, Ruling};
use super::sensor::Sensor;
use super::{Renderer, Scene};

/// |det| of the projection's Jacobian at (u, v), px^2 per mm^2.
pub fn jacobian_det(pose: &Pose, u: f64, v: f64) -> f64 {
    let h = 1e-3;
    let p = |a: f64, b: f64| pose.project(a, b).unwrap();
    let (xu, yu) = {
        let (a, b) = (p(u + h, v), p(u - h, v));
        ((a.0 - b.0) / (2.0 * h), (a.1 - b.1) / (2.0 * h))
    };
    let (xv, yv) = {
        let (a, b) = (p(u, v + h), p(u, v - h));
        ((a.0 - b.0) / (2.0 * h), (a.1 - b.1) / (2.0 * h))
    };
    (xu * yv - xv * yu).abs()
}

/// Light-weighted mean and second moments (x, y, xx) of `e` over a square around `c`.
pub fn moments(e: &[f64], w: usize, c: (f64, f64), r: usize) -> (f64, f64, f64) {
    let (mut s, mut sx, mut sy, mut sxx) = (0.0, 0.0, 0.0, 0.0);
    let (x0, y0) = (c.0.round() as usize - r, c.1.round() as usize - r);
    for y in y0..=y0 + 2 * r {
        for x in x0..=x0 + 2 * r {
            let v = e[y * w + x];
            s += v;
            sx += v * x as f64;
            sy += v * y as f64;
            sxx += v * (x as f64).powi(2);
        }
    }
    let (mx, my) = (sx / s, sy / s);
    (mx, my, sxx / s - mx * mx)
}

/// The image-plane centroid of the renderer's spot at screen centre `c`, by integrating on the
/// screen: the image of radiance L is L(u(x)), so its moments are
/// sum over screen points of x(u) L(u) V |det J(u)| over sum of L V |det J| (a change of
/// variables; V the vignetting at x).
pub fn continuous_centroid(r: &Renderer, c: (f64, f64)) -> (f64, f64) {
    let b = &r.scene.beam;
    let blob = Blob {
        centre: c,
        sigma: b.sigma_mm,
        angle: b.angle_deg.to_radians(),
        peak: 1.0,
    };
    let (step, reach) = (0.05, blob.reach());
    let n = (reach / step).ceil() as i32;
    let (mut s, mut sx, mut sy) = (0.0, 0.0, 0.0);
    for i in -n..=n {
        for j in -n..=n {
            let (u, v) = (c.0 + i as f64 * step, c.1 + j as f64 * step);
            let (x, y) = r.pose.project(u, v).unwrap();
            let cam = r.pose.camera();
            let xn = (x - cam.width as f64 / 2.0) / cam.focal_px;
            let yn = (y - cam.height as f64 / 2.0) / cam.focal_px;
            let vignette = 1.0 / (1.0 + xn * xn + yn * yn).powi(2);
            let w = blob.at(u, v) * jacobian_det(&r.pose, u, v) * vignette;
            s += w;
            sx += w * x;
            sy += w * y;
        }
    }
    (sx / s, sy / s)
}

pub fn turned_camera(tilt_u: f64, k1: f64) -> Camera {
    Camera {
        tilt_u_deg: tilt_u,
        tilt_v_deg: 0.0,
        roll_deg: 0.0,
        k1,
        ..Camera::default()
    }
}

/// A noise-free scene: no ghost, no speckle, flat room light at `room_e`, spot peak `peak_e`.
pub fn quiet_scene(camera: Camera, ruling: Ruling, room_e: f64, peak_e: f64) -> Scene {
    let mut s = Scene {
        camera,
        ruling,
        light: RoomLight {
            level_e: room_e,
            lamp_mm: (0.0, 0.0, 1e7),
            ..RoomLight::default()
        },
        sensor: Sensor {
            noise: false,
            ..Sensor::default()
        },
        ghost: false,
        ..Scene::default()
    };
    s.beam.peak_e = peak_e;
    s.beam.speckle_px = 0.0;
    s
}

pub fn laser_only(tilt_u: f64) -> Scene {
    let mut s = quiet_scene(turned_camera(tilt_u, -0.05), Ruling::none(), 0.0, 4000.0);
    s.beam.halo_fraction = 0.0;
    s
}
