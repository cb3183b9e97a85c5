//! Behaviour of the spot finder beyond raw accuracy: each status, the quality figures, the background
//! following changing light, the ROI, and tracking a moving spot.

use ndarray::Array2;
use rand::rngs::StdRng;
use rand::SeedableRng;
use rand_distr::{Distribution, Normal};
use spotlever::frame::{Pixels, Plane};
use spotlever::spot::{locate, Roi, SpotConfig, SpotStatus, Tracker};
use spotlever::synth::{render_flat_spot, FlatSpot, Sensor};
use spotlever::units::PixelPoint;

/// Per-axis Cramér–Rao bound for a sigma 2.5 px, 180 DN spot in 3 DN noise, about 0.0134 px; computed
/// in tests/spot_accuracy.rs from the Fisher information (Kay vol. 1, ch. 3).
const CRB_AXIS_PX: f64 = 0.0134;

/// A plane with Gaussian spots (centre, peak) on `background(x, y)`, 3 DN noise, rounded and clipped
/// at 255.
fn plane_with(
    w: usize,
    h: usize,
    spots: &[(PixelPoint, f64)],
    sigma: f64,
    background: impl Fn(f64, f64) -> f64,
    seed: u64,
) -> Plane {
    let mut rng = StdRng::seed_from_u64(seed);
    let noise = Normal::new(0.0, 3.0).unwrap();
    let px = Array2::from_shape_fn((h, w), |(y, x)| {
        let (xf, yf) = (x as f64, y as f64);
        let mut v = background(xf, yf) + noise.sample(&mut rng);
        for (c, a) in spots {
            v += a * (-((xf - c.x).powi(2) + (yf - c.y).powi(2)) / (2.0 * sigma * sigma)).exp();
        }
        v.round().clamp(0.0, 255.0) as u16
    });
    Plane::new(px, 255)
}

/// A sigma 2.5 px spot on 40 DN in 3 DN noise, 8-bit, in a 96 x 96 frame.
fn flat(centre: PixelPoint, peak_dn: f64) -> FlatSpot {
    FlatSpot {
        width: 96,
        height: 96,
        centre,
        peak_dn,
        background_dn: 40.0,
        sigma_px: 2.5,
        sensor: Sensor {
            noise_dn: 3.0,
            blur_sigma_px: 0.0,
            white: 255,
        },
    }
}

fn pt(x: f64, y: f64) -> PixelPoint {
    PixelPoint { x, y }
}

fn dist(a: PixelPoint, b: PixelPoint) -> f64 {
    ((a.x - b.x).powi(2) + (a.y - b.y).powi(2)).sqrt()
}

#[test]
fn blank_frames_are_lost() {
    let config = SpotConfig::default();
    let noisy = plane_with(320, 240, &[], 2.5, |_, _| 40.0, 1);
    let fix = locate(&noisy, &config);
    assert_eq!(fix.status, SpotStatus::Lost);
    assert!(fix.position.is_none());
    let flat = Plane::new(Array2::from_elem((240, 320), 40u16), 255);
    assert_eq!(locate(&flat, &config).status, SpotStatus::Lost);
    let black = Plane::new(Array2::zeros((240, 320)), 255);
    assert_eq!(locate(&black, &config).status, SpotStatus::Lost);
    let tiny = Plane::new(Array2::from_elem((3, 2), 40u16), 255);
    assert_eq!(locate(&tiny, &config).status, SpotStatus::Lost);
    let mut tracker = Tracker::new(config);
    assert_eq!(tracker.process(&noisy).status, SpotStatus::Lost);
}

#[test]
fn two_equal_spots_are_ambiguous() {
    let (a, b) = (pt(80.3, 100.6), pt(230.7, 140.2));
    let pair = |second_peak: f64, seed: u64| {
        let p = plane_with(
            320,
            240,
            &[(a, 150.0), (b, second_peak)],
            2.5,
            |_, _| 40.0,
            seed,
        );
        locate(&p, &SpotConfig::default())
    };
    let fix = pair(150.0, 2);
    assert_eq!(fix.status, SpotStatus::Ambiguous);
    // The position is one of the two spots, not somewhere between.
    let pos = fix.position.expect("the stronger spot's position");
    assert!(dist(pos, a) < 0.1 || dist(pos, b) < 0.1);
    // A much weaker second spot (a fifth) does not make it ambiguous.
    let fix = pair(30.0, 3);
    assert_eq!(fix.status, SpotStatus::Ok);
    assert!(dist(fix.position.unwrap(), a) < 0.1);
}

#[test]
fn clipped_spot_is_saturated_and_its_peak_extrapolated() {
    let spot = flat(pt(47.3, 48.8), 600.0);
    let plane = render_flat_spot(&spot, 4).unwrap();
    let clipped = plane.values().filter(|&v| v == 255).count() as u32;
    let fix = locate(&plane, &SpotConfig::default());
    assert_eq!(fix.status, SpotStatus::Saturated);
    assert!(fix.status.has_position());
    // All clipped pixels of the frame belong to the spot and lie in the fitted window.
    assert_eq!(fix.saturated_px, clipped);
    assert!(clipped > 5);
    // The amplitude comes from the wings' shape, so it exceeds what the sensor could show.
    assert!(fix.peak > 255.0 - 40.0, "peak {}", fix.peak);
    assert!(dist(fix.position.unwrap(), spot.centre) < 0.05);
}

#[test]
fn quality_figures_match_the_drawn_spot() {
    let spot = flat(pt(40.2, 55.7), 180.0);
    let fix = locate(&render_flat_spot(&spot, 5).unwrap(), &SpotConfig::default());
    assert_eq!(fix.status, SpotStatus::Ok);
    assert_eq!(fix.saturated_px, 0);
    // RMS radius of an isotropic Gaussian is sqrt(2) sigma (common practice, no source); the fitted
    // sigma's own scatter here is well under 1 %.
    let rms_radius = 2.0f64.sqrt() * 2.5;
    assert!(
        (fix.width_px / rms_radius - 1.0).abs() < 0.03,
        "{}",
        fix.width_px
    );
    // Volume of a 2-D Gaussian: 2 pi sigma^2 A (common practice, no source). The window sum adds the
    // noise of about 300 pixels (3 DN x sqrt(300) ~ 52 DN) to about 7070 DN: allow 5 %.
    let volume = 2.0 * std::f64::consts::PI * 2.5 * 2.5 * 180.0;
    assert!(
        (fix.integral / volume - 1.0).abs() < 0.05,
        "{}",
        fix.integral
    );
    assert!((fix.peak / 180.0 - 1.0).abs() < 0.05, "{}", fix.peak);
    // SNR = peak / noise; the noise comes from a few hundred ring pixels via the MAD, whose relative
    // standard error is about 1.17 / sqrt(n) (common practice, from memory): allow 20 %.
    assert!((fix.snr / (180.0 / 3.0) - 1.0).abs() < 0.2, "{}", fix.snr);
}

#[test]
fn spatial_background_slope_does_not_shift_the_spot() {
    // 0.5 DN per px across x and 0.25 DN per px down: a plain centroid would be pulled uphill.
    let n = 100;
    let (mut ex, mut ey) = (0.0, 0.0);
    for i in 0..n {
        let c = pt(60.0 + 0.0137 * i as f64, 50.0 + 0.0091 * i as f64);
        let p = plane_with(
            120,
            100,
            &[(c, 180.0)],
            2.5,
            |x, y| 20.0 + 0.5 * x + 0.25 * y,
            100 + i,
        );
        let fix = locate(&p, &SpotConfig::default());
        assert_eq!(fix.status, SpotStatus::Ok);
        let q = fix.position.unwrap();
        ex += q.x - c.x;
        ey += q.y - c.y;
    }
    let (bx, by) = (ex / n as f64, ey / n as f64);
    // An unbiased estimator's mean error over n trials has standard deviation bound / sqrt(n); allow
    // five of them (about 0.0067 px).
    let tol = 5.0 * CRB_AXIS_PX / (n as f64).sqrt();
    assert!(
        bx.abs() < tol && by.abs() < tol,
        "bias ({bx}, {by}), tolerance {tol}"
    );
}

#[test]
fn tracker_background_follows_slowly_rising_room_light() {
    let config = SpotConfig::default();
    let weight = config.background_weight;
    let mut tracker = Tracker::new(config);
    let rate = 0.5; // DN per frame
    let frames = 80;
    for f in 0..frames {
        let level = 40.0 + rate * f as f64;
        let c = pt(100.0 + 0.2 * f as f64, 80.0 + 0.05 * f as f64);
        let p = plane_with(220, 160, &[(c, 150.0)], 2.5, |_, _| level, 500 + f);
        let fix = tracker.process(&p);
        assert_eq!(fix.status, SpotStatus::Ok, "frame {f}");
        // 0.1 px is about seven times the per-axis bound of a similar spot; a mis-handled background
        // would show up in the amplitude first.
        assert!(dist(fix.position.unwrap(), c) < 0.1, "frame {f}");
        if f > 40 {
            // An exponentially weighted average with weight w lags a ramp of r per frame by
            // r (1 - w) / w in steady state (standard property of that filter). Each frame's level comes
            // from ~500 ring pixels (3 DN / sqrt(500) ~ 0.13 DN); allow 0.5 DN around the lagged value.
            let lag = rate * (1.0 - weight) / weight;
            let b = tracker.background().expect("a background").level;
            assert!(
                (b - (level - lag)).abs() < 0.5,
                "frame {f}: background {b}, light {level}, expected lag {lag}"
            );
            assert!((fix.peak / 150.0 - 1.0).abs() < 0.05, "peak {}", fix.peak);
        }
    }
}

#[test]
fn roi_is_respected() {
    let bright = pt(50.4, 60.3);
    let dim = pt(250.6, 150.2);
    let p = plane_with(
        320,
        240,
        &[(bright, 200.0), (dim, 100.0)],
        2.5,
        |_, _| 40.0,
        7,
    );
    let roi = Roi {
        x: 180,
        y: 100,
        width: 120,
        height: 120,
    };
    let config = SpotConfig {
        roi: Some(roi),
        ..SpotConfig::default()
    };
    let fix = locate(&p, &config);
    assert_eq!(fix.status, SpotStatus::Ok);
    assert!(dist(fix.position.unwrap(), dim) < 0.1);
    let mut tracker = Tracker::new(config);
    for _ in 0..3 {
        let fix = tracker.process(&p);
        assert!(dist(fix.position.unwrap(), dim) < 0.1);
    }
    // Without the ROI the brighter spot wins (and the pair is ambiguous: the dim one is half as bright).
    let free = locate(&p, &SpotConfig::default());
    assert!(dist(free.position.unwrap(), bright) < 0.1);
    // An ROI that misses the image finds nothing, and says so without a panic.
    let outside = SpotConfig {
        roi: Some(Roi {
            x: 400,
            y: 10,
            width: 50,
            height: 50,
        }),
        ..SpotConfig::default()
    };
    assert_eq!(locate(&p, &outside).status, SpotStatus::Lost);
    assert!(!outside.roi.unwrap().fits_in(320, 240));
    assert!(roi.fits_in(320, 240));
}

#[test]
fn tracker_follows_a_moving_spot_and_recovers_after_a_jump() {
    let mut tracker = Tracker::new(SpotConfig::default());
    for f in 0..40 {
        // Up to 6 px per frame, speeding up: the prediction from the last step keeps up.
        let c = if f < 30 {
            pt(60.0 + 0.1 * (f * f) as f64, 90.0 + 1.5 * f as f64)
        } else {
            // A jump far outside the tracking window.
            pt(400.0 + f as f64, 60.0)
        };
        let p = plane_with(480, 240, &[(c, 160.0)], 2.5, |_, _| 30.0, 900 + f);
        let fix = tracker.process(&p);
        assert_eq!(fix.status, SpotStatus::Ok, "frame {f}");
        assert!(
            dist(fix.position.unwrap(), c) < 0.1,
            "frame {f}: {fix:?} vs {c:?}"
        );
    }
    // Losing the spot, then finding it again.
    let blank = plane_with(480, 240, &[], 2.5, |_, _| 30.0, 1);
    assert_eq!(tracker.process(&blank).status, SpotStatus::Lost);
    let c = pt(123.4, 111.1);
    let p = plane_with(480, 240, &[(c, 160.0)], 2.5, |_, _| 30.0, 2);
    assert!(dist(tracker.process(&p).position.unwrap(), c) < 0.1);
}

#[test]
fn periodic_full_search_notices_a_second_spot() {
    let config = SpotConfig {
        full_search_every: 5,
        ..SpotConfig::default()
    };
    let mut tracker = Tracker::new(config);
    let (a, b) = (pt(60.2, 70.4), pt(400.7, 180.3));
    let one = plane_with(480, 240, &[(a, 150.0)], 2.5, |_, _| 30.0, 11);
    let two = plane_with(480, 240, &[(a, 150.0), (b, 150.0)], 2.5, |_, _| 30.0, 12);
    assert_eq!(tracker.process(&one).status, SpotStatus::Ok);
    // Tracking alone looks only near the first spot; within five frames a full search sees both.
    let statuses: Vec<SpotStatus> = (0..6).map(|_| tracker.process(&two).status).collect();
    assert!(statuses.contains(&SpotStatus::Ok), "{statuses:?}");
    assert!(statuses.contains(&SpotStatus::Ambiguous), "{statuses:?}");
    // Without the periodic search the tracker keeps following the first spot quietly.
    let mut quiet = Tracker::new(SpotConfig::default());
    quiet.process(&one);
    for _ in 0..6 {
        let fix = quiet.process(&two);
        assert_eq!(fix.status, SpotStatus::Ok);
        assert!(dist(fix.position.unwrap(), a) < 0.1);
    }
}

#[test]
fn a_followed_spot_dimming_below_the_search_threshold_is_kept() {
    let config = SpotConfig::default();
    let mut tracker = Tracker::new(config.clone());
    let c = pt(48.3, 47.6);
    for f in 0..5 {
        let p = plane_with(96, 96, &[(c, 160.0)], 2.5, |_, _| 40.0, 300 + f);
        assert_eq!(tracker.process(&p).status, SpotStatus::Ok, "frame {f}");
    }
    // The laser dims by a fifth a frame (a spot that loses nine tenths of its light at once is a
    // blocked beam: `a_spot_with_a_few_percent_of_the_runs_light_is_weak`).
    for k in 1..=10 {
        let peak = 160.0 * 0.8f64.powi(k);
        let p = plane_with(96, 96, &[(c, peak)], 2.5, |_, _| 40.0, 310 + k as u64);
        assert_eq!(tracker.process(&p).status, SpotStatus::Ok, "peak {peak:.1}");
    }
    // Peak 4.5 noise figures: below min_snr (6) for a fresh search, above half of it, and the whole
    // spot is 4.5 sqrt(pi) 2.5 = 20 standard errors strong.
    let dim = plane_with(96, 96, &[(c, 13.5)], 2.5, |_, _| 40.0, 400);
    assert_eq!(locate(&dim, &config).status, SpotStatus::Lost);
    let fix = tracker.process(&dim);
    assert_eq!(fix.status, SpotStatus::Ok, "{fix:?}");
    // Per-axis bound s sqrt(2 / pi) / A = 0.18 px (Kay vol. 1, ch. 3, continuous approximation);
    // four times the radial figure sqrt(2) x 0.18 px (common practice, no source).
    let bound_radial = std::f64::consts::SQRT_2 * 3.0 * (2.0 / std::f64::consts::PI).sqrt() / 13.5;
    let d = dist(fix.position.unwrap(), c);
    assert!(d < 4.0 * bound_radial, "{d:.3} px off");
    // Nothing there at all: lost even while following.
    let blank = plane_with(96, 96, &[], 2.5, |_, _| 40.0, 401);
    assert_eq!(tracker.process(&blank).status, SpotStatus::Lost);
}

#[test]
fn the_answer_does_not_depend_on_how_the_pixels_are_stored() {
    // The same values as 8-bit, as 16-bit, and as 8-bit in column-major order.
    let storages = |p: &Plane| -> [Plane; 3] {
        let Pixels::Eight(a) = p.pixels() else {
            panic!("the synthesizer gives 8-bit planes for an 8-bit sensor")
        };
        let column_major = a.t().as_standard_layout().into_owned().reversed_axes();
        assert!(!column_major.is_standard_layout());
        [
            p.clone(),
            Plane::new(p.to_u16().into_owned(), p.white),
            Plane::from_u8_array(column_major),
        ]
    };
    let config = SpotConfig::default();
    let mut trackers: Vec<Tracker> = (0..3).map(|_| Tracker::new(config.clone())).collect();
    for f in 0..12u64 {
        // A spot stepping sideways with a clipped core on some frames.
        let peak = if f % 4 == 3 { 600.0 } else { 150.0 };
        let spot = flat(pt(30.2 + 2.7 * f as f64, 47.6), peak);
        let planes = storages(&render_flat_spot(&spot, 500 + f).unwrap());
        let once: Vec<_> = planes.iter().map(|p| locate(p, &config)).collect();
        let followed: Vec<_> = trackers
            .iter_mut()
            .zip(&planes)
            .map(|(t, p)| t.process(p))
            .collect();
        assert!(once[0].status.has_position(), "frame {f}: {:?}", once[0]);
        assert!(
            followed[0].status.has_position(),
            "frame {f}: {:?}",
            followed[0]
        );
        for k in 1..3 {
            assert_eq!(once[k], once[0], "frame {f}, storage {k}");
            assert_eq!(followed[k], followed[0], "frame {f}, storage {k}");
        }
    }
}

#[test]
fn studio_range_luma_reads_as_its_widened_values() {
    // Video luma kept as decoded (16-235) must give what the same frame widened to 0-255 up front
    // gives: equal planes, the same one-shot answer and the same tracked answers.
    let (w, h) = (96usize, 96usize);
    let config = SpotConfig::default();
    let mut kept = Tracker::new(config.clone());
    let mut widened = Tracker::new(config.clone());
    for f in 0..10u64 {
        let peak = if f % 5 == 4 { 600.0 } else { 150.0 };
        let spot = flat(pt(30.2 + 2.7 * f as f64, 47.6), peak);
        let full = render_flat_spot(&spot, 700 + f).unwrap();
        // Full range to studio range the way an encoder's colour conversion does it (BT.601).
        let studio: Vec<u8> = full
            .values()
            .map(|v| (16.0 + v.min(255) as f64 * 219.0 / 255.0).round() as u8)
            .collect();
        let as_full: Vec<u8> = studio
            .iter()
            .map(|&s| spotlever::frame::studio_to_full(s))
            .collect();
        let a = Plane::from_studio_luma_vec(w, h, studio).unwrap();
        let b = Plane::from_u8_vec(w, h, as_full).unwrap();
        assert!(matches!(a.pixels(), Pixels::Studio(_)));
        assert_eq!(a, b, "frame {f}");
        assert_eq!(locate(&a, &config), locate(&b, &config), "frame {f}");
        let (ta, tb) = (kept.process(&a), widened.process(&b));
        assert!(ta.status.has_position(), "frame {f}: {ta:?}");
        assert_eq!(ta, tb, "frame {f}");
    }
}

/// Every status name written to the track CSV reads back as itself, and only `ok` and `saturated`
/// carry a position the analysis may use (the table in README.md).
#[test]
fn status_names_round_trip_and_only_ok_and_saturated_have_positions() {
    let all = [
        (SpotStatus::Ok, "ok", true),
        (SpotStatus::Saturated, "saturated", true),
        (SpotStatus::Lost, "lost", false),
        (SpotStatus::Weak, "weak", false),
        (SpotStatus::Ambiguous, "ambiguous", false),
        (SpotStatus::Unreadable, "unreadable", false),
    ];
    for (status, name, usable) in all {
        assert_eq!(status.as_str(), name);
        assert_eq!(SpotStatus::parse(name), Some(status));
        assert_eq!(status.has_position(), usable, "{name}");
    }
    assert_eq!(SpotStatus::parse("blocked"), None);
}

/// A dark patch (a shadow on the screen) stands out of its surroundings only as a deficit: no
/// light, so never a spot, whatever its contrast.
#[test]
fn a_shadow_is_never_a_spot() {
    let dark = |x: f64, y: f64| {
        let r2 = (x - 80.0).powi(2) + (y - 60.0).powi(2);
        100.0 - 60.0 * (-r2 / (2.0 * 9.0)).exp()
    };
    let plane = plane_with(160, 120, &[], 2.5, dark, 7);
    let fix = locate(&plane, &SpotConfig::default());
    assert!(!fix.status.has_position(), "{fix:?}");
    let mut tracker = Tracker::new(SpotConfig::default());
    for _ in 0..3 {
        let fix = tracker.process(&plane);
        assert!(!fix.status.has_position(), "{fix:?}");
    }
}

/// A run's spot that suddenly carries a few percent of its light (the beam blocked, scattered light
/// left on the screen) is `weak`, without a position, although the same faint patch seen alone
/// would pass for a spot; when the beam returns it is found again.
#[test]
fn a_spot_with_a_few_percent_of_the_runs_light_is_weak() {
    let at = |x: f64| PixelPoint { x, y: 60.0 };
    // Light in proportion to peak x sigma^2: 20 x 2.5^2 against 200 x 4^2, 3.9 %.
    let bright = |i: u64| {
        plane_with(
            160,
            120,
            &[(at(70.0 + i as f64), 200.0)],
            4.0,
            |_, _| 40.0,
            i,
        )
    };
    let faint = |i: u64| plane_with(160, 120, &[(at(80.0), 20.0)], 2.5, |_, _| 40.0, 100 + i);
    let alone = locate(&faint(0), &SpotConfig::default());
    assert!(
        alone.status.has_position(),
        "precondition: the faint patch alone passes for a spot: {alone:?}"
    );
    let mut tracker = Tracker::new(SpotConfig::default());
    for i in 0..10 {
        let fix = tracker.process(&bright(i));
        assert!(fix.status.has_position(), "bright frame {i}: {fix:?}");
    }
    for i in 0..5 {
        let fix = tracker.process(&faint(i));
        assert_eq!(fix.status, SpotStatus::Weak, "faint frame {i}: {fix:?}");
        assert!(fix.position.is_none());
    }
    let back = tracker.process(&bright(3));
    assert!(back.status.has_position(), "beam back: {back:?}");
}
