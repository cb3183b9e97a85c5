//! The lever geometry checked against an independent ray trace: a beam reflected by a plane mirror whose
//! normal is turned by theta about the vertical (fibre) axis, traced to a flat screen or to a scale
//! curved on a circle about the mirror, for twists up to 50 mrad.

use nalgebra::{Rotation3, Unit, Vector3};
use spotlever::lever::{small_angle_error, Lever};
use spotlever::setup::ScaleShape;
use spotlever::units::Radians;

/// Reflect direction `d` in a mirror of unit normal `n` (law of reflection, r = d - 2 (d.n) n).
fn reflect(d: Vector3<f64>, n: Vector3<f64>) -> Vector3<f64> {
    d - 2.0 * d.dot(&n) * n
}

/// Mirror at the origin, vertical axis y, undeflected reflected beam along +z. The incoming beam arrives
/// in the horizontal plane at `incidence` from the +z direction (0 = straight back along the screen
/// normal). Returns the reflected direction for a twist `theta`.
fn traced_direction(theta: f64, incidence: f64) -> Vector3<f64> {
    // Travelling towards the mirror.
    let d = -Vector3::new(incidence.sin(), 0.0, incidence.cos());
    let out = Vector3::z();
    // Untwisted normal: bisects the reversed incoming beam and the outgoing beam.
    let n0 = (out - d).normalize();
    let axis = Unit::new_normalize(Vector3::y());
    let n = Rotation3::from_axis_angle(&axis, theta) * n0;
    let r = reflect(d, n);
    assert!((reflect(d, n0) - out).norm() < 1e-12);
    r
}

/// Scale reading on a flat screen in the plane z = L: where the reflected ray meets it, plus x0.
/// (The rotation by +theta about +y turns +z towards +x.)
fn flat_reading(theta: f64, incidence: f64, l: f64, x0: f64) -> f64 {
    let r = traced_direction(theta, incidence);
    let t = l / r.z;
    x0 + t * r.x
}

/// Reading on a scale curved on the circle of radius L about the mirror: arc length from the foot point.
fn curved_reading(theta: f64, incidence: f64, l: f64, x0: f64) -> f64 {
    let r = traced_direction(theta, incidence);
    let p = r * (l / (r.x * r.x + r.z * r.z).sqrt());
    x0 + l * p.x.atan2(p.z)
}

fn twists() -> Vec<f64> {
    (-10..=10).map(|k| 0.005 * k as f64).collect()
}

#[test]
fn flat_screen_angle_matches_the_ray_trace() {
    let lever = Lever {
        distance_m: 2.4,
        zero_m: 0.013,
        shape: ScaleShape::Flat,
    };
    for incidence in [0.0, 0.2, -0.35] {
        for theta in twists() {
            let x = flat_reading(theta, incidence, lever.distance_m, lever.zero_m);
            let got = lever.angle(x).0;
            assert!((got - theta).abs() < 1e-13, "theta {theta}: got {got}");
            assert!((lever.reading(Radians(theta)) - x).abs() < 1e-12);
        }
    }
}

#[test]
fn curved_scale_angle_matches_the_ray_trace() {
    let lever = Lever {
        distance_m: 1.75,
        zero_m: -0.02,
        shape: ScaleShape::Curved,
    };
    for incidence in [0.0, 0.3] {
        for theta in twists() {
            let x = curved_reading(theta, incidence, lever.distance_m, lever.zero_m);
            let got = lever.angle(x).0;
            assert!((got - theta).abs() < 1e-13, "theta {theta}: got {got}");
            assert!((lever.reading(Radians(theta)) - x).abs() < 1e-12);
        }
    }
}

#[test]
fn small_angle_reading_on_a_flat_screen_errs_as_stated() {
    // The traced reading read with the small-angle form (x - x0) / (2 L) is off by small_angle_error.
    let (l, x0) = (3.0, 0.0);
    for theta in twists().into_iter().filter(|t| *t != 0.0) {
        let x = flat_reading(theta, 0.0, l, x0);
        let naive = (x - x0) / (2.0 * l);
        let rel = naive / theta - 1.0;
        assert!((rel - small_angle_error(Radians(theta))).abs() < 1e-12);
        // About (4/3) theta^2 (series of tan(2 theta) / (2 theta)), to the next order (32/15 theta^4).
        let series = 4.0 / 3.0 * theta * theta;
        assert!((rel - series).abs() < 32.0 / 15.0 * theta.powi(4) * 1.01 + 1e-15);
    }
}

#[test]
fn sensitivity_is_the_derivative_of_the_traced_angle() {
    for shape in [ScaleShape::Flat, ScaleShape::Curved] {
        let lever = Lever {
            distance_m: 2.0,
            zero_m: 0.0,
            shape,
        };
        for theta in [0.0, 0.02, -0.05] {
            let read = |t: f64| match shape {
                ScaleShape::Flat => flat_reading(t, 0.0, 2.0, 0.0),
                ScaleShape::Curved => curved_reading(t, 0.0, 2.0, 0.0),
            };
            let h = 1e-6;
            let dx_dtheta = (read(theta + h) - read(theta - h)) / (2.0 * h);
            let s = lever.sensitivity(read(theta));
            assert!((s * dx_dtheta - 1.0).abs() < 1e-7, "{shape:?} {theta}");
        }
    }
}
