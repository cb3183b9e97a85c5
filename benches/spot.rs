//! Speed of the spot finder on 1920 x 1080 8-bit frames rendered by the scene synthesizer: a full-frame
//! search (`locate`), one tracking step of `Tracker::process`, and the rendering itself.
//!
//! Run with `cargo bench --bench spot`.

use criterion::{criterion_group, criterion_main, Criterion};
use spotlever::frame::Plane;
use spotlever::spot::{locate, SpotConfig, SpotStatus, Tracker};
use spotlever::synth::{
    render_scene, CameraView, Illumination, LaserSpot, RuledScreen, Scene, Sensor, Speckle,
};
use spotlever::units::ScreenPoint;
use std::hint::black_box;

const W: usize = 1920;
const H: usize = 1080;

fn scene(spot_x_mm: f64) -> Scene {
    let mut view = CameraView::square_on(ScreenPoint::default(), 4.0, W, H);
    view.tilt_y_deg = 20.0;
    view.tilt_x_deg = 5.0;
    Scene {
        width: W,
        height: H,
        screen_to_image: view.homography().expect("valid view"),
        screen: RuledScreen::default(),
        illumination: Illumination::default(),
        spot: Some(LaserSpot {
            centre: ScreenPoint {
                x_mm: spot_x_mm,
                y_mm: 12.0,
            },
            peak_dn: 220.0,
            sigma_px: 3.0,
            speckle: Some(Speckle {
                contrast: 0.2,
                grain_px: 2.0,
                seed: 3,
            }),
        }),
        sensor: Sensor {
            noise_dn: 2.0,
            blur_sigma_px: 0.7,
            white: 255,
        },
    }
}

fn frames() -> (Plane, Plane) {
    let (a, _) = render_scene(&scene(30.0), 1).expect("renders");
    let (b, _) = render_scene(&scene(30.1), 2).expect("renders");
    (a, b)
}

fn bench_spot(c: &mut Criterion) {
    let (a, b) = frames();
    let config = SpotConfig::default();
    assert_eq!(locate(&a, &config).status, SpotStatus::Ok);

    c.bench_function("spot/full_frame_search_1920x1080", |bench| {
        bench.iter(|| black_box(locate(black_box(&a), &config)))
    });

    let mut tracker = Tracker::new(config.clone());
    tracker.process(&a);
    let mut flip = false;
    c.bench_function("spot/tracking_step_1920x1080", |bench| {
        bench.iter(|| {
            flip = !flip;
            black_box(tracker.process(black_box(if flip { &b } else { &a })))
        })
    });

    let s = scene(30.0);
    c.bench_function("synth/render_scene_1920x1080", |bench| {
        bench.iter(|| black_box(render_scene(black_box(&s), 5).expect("renders")))
    });
}

criterion_group!(benches, bench_spot);
criterion_main!(benches);
