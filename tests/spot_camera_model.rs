//! The spot finder judged on frames from an independent model of a real camera and screen
//! (`tests/camera_model/`): perspective, lens distortion, a printed ruling, a clipped, speckled,
//! elliptical spot with a halo and a window ghost, room light that steps, ramps and is shadowed, a
//! blocked beam, motion blur, sensor noise, 8-bit clipping and JPEG.
//!
//! The model's own checks run as normal tests, with a short stretch of the measured run (frames
//! 300..350: a blocked beam and a ghost). The finder's figures on the whole 400-frame 1280 x 720
//! run come from `cargo test --test spot_camera_model -- --ignored --nocapture`, which prints a
//! table of them and checks them against the finder's targets: RMS error at most 0.8 times that of
//! a plain thresholded centroid on the same frames (`camera_model::judge`), a mean error of at most
//! 0.1 px after a step of the room light, and no blocked-beam frame reported as a found spot (this
//! one runs as a normal test). Those the finder misses today are ignored with the figures measured
//! today in the reason.
//! `print_what_each_effect_costs` repeats the run with one effect of the model removed or changed
//! at a time.
//!
//! Reading the figures: the speckle grain (sigma 1.4 px) is a third of the spot's sigma, so about
//! (s_spot / s_grain)^2 = 8 independent grains make up the spot, and any centroid of it scatters
//! by roughly s_spot / sqrt(8) = 1.4 px from frame to frame; that, not sensor noise, sets the RMS
//! of both methods. The mean error after the light step is measured over about 110 frames, so its
//! own standard error (printed beside it) is about 0.16 px for the finder.

mod camera_model;

use camera_model::beam::{speckle_field, speckle_looks};
use camera_model::camera::Camera;
use camera_model::judge::{figures, print_table, run_sequence, Run, BLOCKED, FRAMES, LIGHT_STEP_S};
use camera_model::motion::Swing;
use camera_model::probe::{
    continuous_centroid, jacobian_det, laser_only, moments, quiet_scene, turned_camera,
};
use camera_model::screen::{Lines, Ruling};
use camera_model::sensor::Sensor;
use camera_model::{Renderer, Scene};
use rand::rngs::SmallRng;
use rand::SeedableRng;
use std::sync::OnceLock;

// ---------------------------------------------------------------------------------------------
// The model's own checks.

#[test]
fn a_point_projected_and_back_projected_returns() {
    let pose = Camera {
        tilt_u_deg: 40.0,
        tilt_v_deg: 7.0,
        roll_deg: 3.0,
        k1: -0.05,
        ..Camera::default()
    }
    .pose();
    let mut worst_mm: f64 = 0.0;
    let mut worst_px: f64 = 0.0;
    for y in (0..720).step_by(60) {
        for x in (0..1280).step_by(80) {
            let (u, v) = pose.back_project(x as f64, y as f64).unwrap();
            let (px, py) = pose.project(u, v).unwrap();
            worst_px = worst_px.max((px - x as f64).hypot(py - y as f64));
            let (u2, v2) = pose.back_project(px, py).unwrap();
            worst_mm = worst_mm.max((u2 - u).hypot(v2 - v));
        }
    }
    // Round-off of double precision over a 30-step fixed point: far below 1e-6.
    assert!(worst_px < 1e-6, "pixel round trip off by {worst_px:e} px");
    assert!(worst_mm < 1e-6, "screen round trip off by {worst_mm:e} mm");
}

#[test]
fn perspective_foreshortens_by_the_cosine_of_the_turn() {
    for a_deg in [0.0f64, 20.0, 40.0] {
        let cam = turned_camera(a_deg, 0.0);
        let pose = cam.pose();
        let (f, d, a) = (cam.focal_px, cam.distance_mm, a_deg.to_radians());
        let (cx, cy) = pose.project(0.0, 0.0).unwrap();
        assert!((cx - 640.0).abs() < 1e-9 && (cy - 360.0).abs() < 1e-9);
        // Exact for a pure turn (camera module docs): x = f cos(a) du / (D - du sin(a)).
        for du in [-50.0f64, 50.0] {
            let (x, y) = pose.project(du, 0.0).unwrap();
            let want = f * a.cos() * du / (d - du * a.sin());
            assert!(
                ((x - cx) - want).abs() < 1e-9 * want.abs() + 1e-9,
                "{a_deg} deg, du {du}: {} px, formula {want} px",
                x - cx
            );
            assert!((y - cy).abs() < 1e-9);
        }
        // Local scales at the aim point: f cos(a) / D along u, f / D along v.
        let h = 1e-3;
        let su = (pose.project(h, 0.0).unwrap().0 - pose.project(-h, 0.0).unwrap().0) / (2.0 * h);
        let sv = (pose.project(0.0, h).unwrap().1 - pose.project(0.0, -h).unwrap().1) / (2.0 * h);
        assert!(
            (su / (f * a.cos() / d) - 1.0).abs() < 1e-6,
            "{a_deg} deg: {su} px/mm"
        );
        assert!((sv / (f / d) - 1.0).abs() < 1e-6, "{a_deg} deg: {sv} px/mm");
        assert!((su / sv - a.cos()).abs() < 1e-6);
    }
}

#[test]
fn barrel_distortion_pulls_the_corners_in() {
    let (straight, barrel) = (
        turned_camera(0.0, 0.0).pose(),
        turned_camera(0.0, -0.05).pose(),
    );
    let (u, v) = straight.back_project(1200.0, 680.0).unwrap();
    let (x, y) = barrel.project(u, v).unwrap();
    // r_d = r_n (1 + k1 r_n^2): the corner moves towards the centre by k1 r_n^2 of its radius.
    let (xn, yn) = ((1200.0 - 640.0) / 1400.0, (680.0 - 360.0) / 1400.0);
    let k = 1.0 - 0.05 * (xn * xn + yn * yn);
    assert!((x - (640.0 + 560.0 * k)).abs() < 1e-6 && (y - (360.0 + 320.0 * k)).abs() < 1e-6);
}

#[test]
fn speckle_is_fully_developed() {
    let mut rng = SmallRng::seed_from_u64(11);
    let (w, h, sk) = (256, 256, 1.4);
    let field = speckle_field(w, h, sk, &mut rng);
    let n = field.len() as f64;
    let mean = field.iter().sum::<f64>() / n;
    let var = field.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / n;
    let contrast = var.sqrt() / mean;
    let above = field.iter().filter(|&&x| x > 2.0 * mean).count() as f64 / n;
    // Independent grains: the area over the intensity correlation's integral 2 pi sk^2, about
    // 5300 here. Standard errors then: mean 1/sqrt(N) = 0.014; contrast sqrt(2/N) = 0.019 for an
    // exponential (fourth moment 24); P(I > 2<I>) = exp(-2) with sqrt(p(1-p)/N) = 0.0047. The
    // allowances are four of them.
    let grains = n / (2.0 * std::f64::consts::PI * sk * sk);
    eprintln!("speckle: mean {mean:.4}, contrast {contrast:.4}, P(>2 mean) {above:.4}, ~{grains:.0} grains");
    assert!((mean - 1.0).abs() < 4.0 / grains.sqrt(), "mean {mean}");
    assert!(
        (contrast - 1.0).abs() < 4.0 * (2.0 / grains).sqrt(),
        "contrast {contrast}"
    );
    let p = (-2.0f64).exp();
    assert!(
        (above - p).abs() < 4.0 * (p * (1.0 - p) / grains).sqrt(),
        "P {above}"
    );
}

#[test]
fn two_polarisations_lower_the_speckle_contrast_to_1_over_sqrt_2() {
    let mut rng = SmallRng::seed_from_u64(12);
    let (w, h, sk) = (256, 256, 1.4);
    let field = speckle_looks(w, h, sk, 2, &mut rng);
    let n = field.len() as f64;
    let mean = field.iter().sum::<f64>() / n;
    let sd = (field.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / n).sqrt();
    // Gamma of order 2: contrast 1 / sqrt 2; sample-std error about sqrt(1.25 / N) of it with
    // N = 5300 grains (excess kurtosis 3), allowance four of them.
    let grains = n / (2.0 * std::f64::consts::PI * sk * sk);
    let c = sd / mean;
    assert!(
        (c - std::f64::consts::FRAC_1_SQRT_2).abs() < 4.0 * (1.25 / grains).sqrt() * 0.71,
        "contrast {c}"
    );
}

#[test]
fn the_ruling_absorbs_as_printed() {
    let r = Ruling::default();
    // Point values: on a minor line only, on a major line (minor printed under it), between lines.
    assert!((r.transmission(3.0, 3.5, 0.0, 0.0) - 0.4).abs() < 1e-12);
    assert!((r.transmission(10.0, 3.5, 0.0, 0.0) - 0.4 * 0.15).abs() < 1e-12);
    assert!((r.transmission(3.5, 3.5, 0.0, 0.0) - 1.0).abs() < 1e-12);
    assert!((r.transmission(3.0, 3.0, 0.0, 0.0) - 0.16).abs() < 1e-12);
    // Over a whole pitch the covered fraction is w / p, wherever the pitch starts.
    for c in [0.0, 0.37, -2.81] {
        assert!((r.minor.fraction(c, 1.0) - 0.2).abs() < 1e-12);
        assert!((r.major.fraction(c, 10.0) - 0.04).abs() < 1e-12);
    }
    // Seen through the camera square on: the image mean over a region of about 71 mm of a 1 mm
    // ruling (lines one way) is 1 - a w / p of the plain paper's, to within a part period
    // (a w / 71 = 0.0017).
    let lines = Ruling {
        minor: Lines {
            pitch_mm: 1.0,
            width_mm: 0.3,
            absorption: 0.7,
        },
        major: Ruling::none().major,
        grid: false,
    };
    let mean_of = |ruling: Ruling| {
        let scene = quiet_scene(turned_camera(0.0, 0.0), ruling, 3000.0, 0.0);
        let (e, _) = Renderer::new(scene).expected(0);
        let mut s = 0.0;
        for y in 260..460 {
            for x in 540..740 {
                s += e[y * 1280 + x];
            }
        }
        s
    };
    let ratio = mean_of(lines) / mean_of(Ruling::none());
    assert!((ratio - (1.0 - 0.7 * 0.3)).abs() < 0.0017, "ratio {ratio}");
}

#[test]
fn the_sensor_clips_at_its_full_well_and_at_255() {
    let mut rng = SmallRng::seed_from_u64(3);
    let quiet = Sensor {
        noise: false,
        ..Sensor::default()
    };
    assert_eq!(quiet.read(0.0, &mut rng), 4);
    assert_eq!(quiet.read(3000.0, &mut rng), 132); // 4 + 127.5, rounded away from zero
    assert_eq!(quiet.read(6000.0, &mut rng), 255); // 259 clipped by the converter
    assert_eq!(quiet.read(60000.0, &mut rng), 255);
    let high_gain = Sensor {
        gain: 2.0,
        ..quiet.clone()
    };
    assert_eq!(high_gain.read(1500.0, &mut rng), 132);
    assert_eq!(high_gain.read(5000.0, &mut rng), 255);
    // Shot and read noise: var(DN) = g^2 (n + read^2) + 1/12 (quantisation), g = 255 / 6000.
    let noisy = Sensor::default();
    let n = 40000;
    let v: Vec<f64> = (0..n)
        .map(|_| noisy.read(1000.0, &mut rng) as f64)
        .collect();
    let mean = v.iter().sum::<f64>() / n as f64;
    let var = v.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (n - 1) as f64;
    let g = noisy.dn_per_e();
    let want = g * g * (1000.0 + 144.0) + 1.0 / 12.0;
    // Relative standard error of a sample variance sqrt(2 / n) = 0.7 %; four of them.
    assert!(
        (var / want - 1.0).abs() < 4.0 * (2.0 / n as f64).sqrt(),
        "var {var}, want {want}"
    );
    assert!((mean - (4.0 + g * 1000.0)).abs() < 0.05, "mean {mean}");
    // A rendered spot whose peak is 1.6 full wells has a clipped core, and nothing beyond 255.
    // The converter reaches 254.5 DN at (254.5 - 4) / g electrons, so the core
    // a^2 / s_a^2 + b^2 / s_b^2 < 2 ln(peak / that) clips: an ellipse of pi s_a s_b 2 ln(..) mm^2,
    // |det J| px^2 per mm^2 in the image. Counting whole pixels misses up to about half the
    // perimeter's worth of pixels either way.
    let scene = quiet_scene(Camera::default(), Ruling::none(), 0.0, 9600.0);
    let r = Renderer::new(scene);
    let shot = r.frame(0);
    let clipped = shot.pixels.iter().filter(|&&p| p == 255).count() as f64;
    let (u, v) = shot.truth.centre_mm;
    let det = jacobian_det(&r.pose, u, v);
    let (sa, sb) = r.scene.beam.sigma_mm;
    let level = (254.5 - 4.0) / g;
    let area = std::f64::consts::PI * sa * sb * 2.0 * (9600.0 / level).ln() * det;
    let perimeter = 2.0 * (std::f64::consts::PI * area).sqrt();
    assert!(
        (clipped - area).abs() <= 0.5 * perimeter + 2.0,
        "{clipped} clipped pixels, expected about {area:.1}"
    );
    assert!(shot.pixels.iter().all(|&p| p >= 4));
}

#[test]
fn the_swing_carries_its_state_over_the_steps() {
    let s = Swing::default();
    for &(ts, _) in &s.steps {
        let (a, b) = (s.state(ts - 1e-7), s.state(ts + 1e-7));
        assert!(
            (a.0 - b.0).abs() < 1e-5 && (a.1 - b.1).abs() < 1e-5,
            "{a:?} {b:?}"
        );
    }
    // Zero crossings of x - e in the first segment are half a period apart.
    let mut crossings = Vec::new();
    let dt = 1e-3;
    let mut t = 0.0;
    while t < 129.0 {
        let (a, b) = (s.position(t), s.position(t + dt));
        if a.signum() != b.signum() {
            crossings.push(t + dt * a / (a - b));
        }
        t += dt;
    }
    assert!(crossings.len() >= 3);
    for w in crossings.windows(2) {
        assert!(
            (w[1] - w[0] - s.period_s / 2.0).abs() < 1e-3,
            "{crossings:?}"
        );
    }
    // Amplitude decays by exp(-T/2 / decay) per half period.
    let long = Swing {
        steps: Vec::new(),
        ..s.clone()
    };
    let (a0, a1) = (long.position(0.0), long.position(long.period_s));
    assert!((a1 / a0 - (-long.period_s / long.decay_s).exp()).abs() < 1e-3);
}

#[test]
fn the_truth_is_the_centre_of_the_light() {
    for tilt in [0.0, 40.0] {
        let r = Renderer::new(laser_only(tilt));
        for i in [0, 40] {
            let (e, truth) = r.expected(i);
            let (mx, my, _) = moments(&e, 1280, truth.centre_px, 25);
            let (cx, cy) = continuous_centroid(&r, truth.centre_mm);
            // Pixel integration (2 x 2 points per pixel of a sigma ~4 px Gaussian) and the cut at
            // 4.3 sigma move the centroid by well under 0.005 px.
            let d = (mx - cx).hypot(my - cy);
            assert!(
                d < 0.005,
                "tilt {tilt}, frame {i}: {d} px from the integrated centroid"
            );
            // Perspective makes the image lopsided: along a turn by a the centroid moves by about
            // 1.5 x'' s_u^2 with x'' = 2 f cos(a) sin(a) / D^2, 0.02 px at 40 degrees (and the
            // distortion adds a little); the truth is the projected centre.
            let off = (cx - truth.centre_px.0).hypot(cy - truth.centre_px.1);
            eprintln!(
                "tilt {tilt}, frame {i}: image centroid {off:.4} px from the projected centre"
            );
            assert!(off < 0.05, "tilt {tilt}, frame {i}: {off} px");
        }
    }
}

#[test]
fn a_fast_swing_blurs_the_spot_along_its_path() {
    let mut fast = laser_only(0.0);
    fast.swing = Swing {
        period_s: 4.0,
        decay_s: 1e9,
        equilibrium_mm: 0.0,
        start_mm: 30.0,
        steps: Vec::new(),
    };
    // Frame 1 (1 fps) is a quarter period in: the spot passes the equilibrium at its top speed
    // 30 mm x 2 pi / 4 s = 47 mm/s, so a 0.1 s exposure smears it over 4.7 mm.
    fast.exposure_s = 0.1;
    let blurred = Renderer::new(fast);
    assert!(
        blurred.exposure_path(1.0).len() > 10,
        "too few time steps over the exposure"
    );
    let (e, truth) = blurred.expected(1);
    let (mx, my, vxx) = moments(&e, 1280, truth.centre_px, 30);
    let d = (mx - truth.centre_px.0).hypot(my - truth.centre_px.1);
    assert!(
        d < 0.03,
        "blurred spot {d} px from the exposure's mean centre"
    );
    let still = Renderer::new(Scene {
        exposure_s: 1e-7,
        ..blurred.scene.clone()
    });
    let (es, ts) = still.expected(1);
    let (_, _, vs) = moments(&es, 1280, ts.centre_px, 30);
    let p = |t: f64| {
        let (u, v) = blurred.beam_mm(t);
        blurred.pose.project(u, v).unwrap().0
    };
    let len = p(1.1) - p(1.0);
    // A uniform smear of length L adds L^2 / 12 to the variance along it; the speed changes by
    // under 1 % over the exposure.
    let want = len * len / 12.0;
    assert!(
        ((vxx - vs) / want - 1.0).abs() < 0.05,
        "added variance {} px^2, want {want}",
        vxx - vs
    );
}

// ---------------------------------------------------------------------------------------------
// The finder on 1280 x 720 sequences.

fn run() -> &'static Run {
    static RUN: OnceLock<Run> = OnceLock::new();
    RUN.get_or_init(|| {
        let run = run_sequence(0..FRAMES, true);
        print_table(&run);
        run
    })
}

#[test]
#[ignore = "measurement: prints the table of the finder's figures (about 40 s in the debug profile)"]
fn print_the_figures() {
    let _ = run();
}

#[test]
#[ignore = "target for the spot finder: RMS at most 0.8 x the plain centroid's (measured today: PNG \
            1.873 vs 2.383 px, ratio 0.79; JPEG 85 1.998 vs 2.388 px, ratio 0.84)"]
fn rms_is_at_most_0_8_of_the_plain_centroid() {
    let r = run();
    for (name, k) in [("PNG", 0), ("JPEG 85", 2)] {
        let (finder, centroid) = (figures(r, &r.answers[k]), figures(r, &r.answers[k + 1]));
        assert!(
            finder.rms <= 0.8 * centroid.rms,
            "{name}: spotlever RMS {:.3} px, plain centroid {:.3} px, ratio {:.3}",
            finder.rms,
            centroid.rms,
            finder.rms / centroid.rms
        );
    }
}

#[test]
#[ignore = "target for the spot finder: mean error at most 0.1 px after the light step (measured \
            today: PNG 0.622 px, JPEG 85 0.738 px; standard errors 0.157 and 0.186 px)"]
fn mean_error_after_the_light_step_is_at_most_0_1_px() {
    let r = run();
    for (name, k) in [("PNG", 0), ("JPEG 85", 2)] {
        let f = figures(r, &r.answers[k]);
        assert!(
            f.bias_after_step <= 0.1,
            "{name}: mean error {:.3} px (standard error {:.3} px) over {LIGHT_STEP_S}..{} s",
            f.bias_after_step,
            f.bias_se,
            BLOCKED.0 - 4.0
        );
    }
}

/// Over the whole run, lossless and as JPEG 85: the frame where the beam is cut reads as `weak`,
/// never as a spot (about 40 s in the debug profile).
#[test]
fn no_blocked_frame_is_reported_found_over_the_run() {
    let r = run();
    for (name, k) in [("PNG", 0), ("JPEG 85", 2)] {
        let f = figures(r, &r.answers[k]);
        assert_eq!(
            f.blocked_found, 0,
            "{name}: {} of {} blocked frames reported found",
            f.blocked_found, f.blocked
        );
    }
}

/// Frames 300..350 of the measured run, losslessly stored: the spot, its half-blocked edges, the
/// 20 blocked frames and the spot back, with the ghost in every visible frame.
#[test]
fn blocked_frames_are_not_found_and_the_ghost_is_not_taken() {
    let r = run_sequence(300..350, false);
    let (finder, centroid) = (figures(&r, &r.answers[0]), figures(&r, &r.answers[1]));
    eprintln!("frames 300..350: spotlever {finder:?}\nplain centroid {centroid:?}");
    assert_eq!(finder.blocked, 20);
    assert_eq!(finder.blocked_found, 0, "blocked frames reported found");
    assert_eq!(
        finder.on_ghost, 0,
        "frames where the ghost was taken for the spot"
    );
}

#[test]
fn a_sequence_is_written_as_png_and_jpeg_files() {
    let scene = Scene {
        camera: Camera {
            width: 320,
            height: 240,
            ..Camera::default()
        },
        ..Scene::default()
    };
    let r = Renderer::new(scene);
    let dir = tempfile::tempdir().expect("a temporary folder");
    let truths = r.write_sequence(dir.path(), 2, None).expect("PNG files");
    r.write_sequence(dir.path(), 2, Some(85))
        .expect("JPEG files");
    assert_eq!(truths.len(), 2);
    for i in 0..2 {
        let png = image::open(dir.path().join(format!("frame_{i:05}.png"))).unwrap();
        assert_eq!(
            png.to_luma8().into_raw(),
            r.frame(i).pixels,
            "PNG is lossless"
        );
        let jpg = image::open(dir.path().join(format!("frame_{i:05}.jpg"))).unwrap();
        assert_eq!((jpg.width(), jpg.height()), (320, 240));
    }
}

#[test]
#[ignore = "measurement: the figures with one effect of the model changed at a time (about 3 \
            minutes in the debug profile)"]
fn print_what_each_effect_costs() {
    camera_model::judge::print_effects();
}
