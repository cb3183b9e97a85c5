//! Speed of the spot finder on 1920 x 1080 8-bit frames rendered by the scene synthesizer: a full-frame
//! search (`locate`), one tracking step of `Tracker::process` (each also on the same frames stored as
//! 16-bit values, `.../u16`), and the rendering itself.
//!
//! Run with `cargo bench --bench spot`.
//!
//! Each spot benchmark is measured twice: in wall-clock time (criterion's default) and, on Unix, in
//! CPU time of the benchmarking thread (`cpu/...`), which is what one core spends on the work even
//! when other processes share the machine.

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

/// The same values stored as 16-bit.
fn widened(p: &Plane) -> Plane {
    Plane::new(p.to_u16().into_owned(), p.white)
}

/// The two spot benchmarks on 8-bit frames and on the same frames stored as 16-bit, under any
/// criterion measurement.
fn spot_steps<M: criterion::measurement::Measurement + 'static>(
    c: &mut Criterion<M>,
    prefix: &str,
) {
    let (a8, b8) = frames();
    let (a16, b16) = (widened(&a8), widened(&b8));
    let config = SpotConfig::default();
    for (suffix, a, b) in [("", &a8, &b8), ("/u16", &a16, &b16)] {
        assert_eq!(locate(a, &config).status, SpotStatus::Ok);

        c.bench_function(
            &format!("{prefix}spot/full_frame_search_1920x1080{suffix}"),
            |bench| bench.iter(|| black_box(locate(black_box(a), &config))),
        );

        let mut tracker = Tracker::new(config.clone());
        tracker.process(a);
        let mut flip = false;
        c.bench_function(
            &format!("{prefix}spot/tracking_step_1920x1080{suffix}"),
            |bench| {
                bench.iter(|| {
                    flip = !flip;
                    black_box(tracker.process(black_box(if flip { b } else { a })))
                })
            },
        );
    }
}

/// Rendering one full scene frame, under any criterion measurement.
fn render_step<M: criterion::measurement::Measurement + 'static>(
    c: &mut Criterion<M>,
    prefix: &str,
) {
    let s = scene(30.0);
    let mut g = c.benchmark_group(format!("{prefix}synth"));
    g.sample_size(10);
    g.bench_function("render_scene_1920x1080", |bench| {
        bench.iter(|| black_box(render_scene(black_box(&s), 5).expect("renders")))
    });
    g.finish();
}

fn bench_spot(c: &mut Criterion) {
    spot_steps(c, "");
    render_step(c, "");
}

#[cfg(unix)]
mod cpu {
    //! Criterion measurement of the calling thread's CPU time.
    use criterion::measurement::{Measurement, ValueFormatter};
    use criterion::Throughput;

    pub struct ThreadCpuTime;

    fn now_ns() -> u64 {
        let mut t = libc::timespec {
            tv_sec: 0,
            tv_nsec: 0,
        };
        // SAFETY: `t` is a valid, writable timespec; the clock id is a constant the OS provides.
        let rc = unsafe { libc::clock_gettime(libc::CLOCK_THREAD_CPUTIME_ID, &mut t) };
        if rc != 0 {
            return 0;
        }
        t.tv_sec as u64 * 1_000_000_000 + t.tv_nsec as u64
    }

    impl Measurement for ThreadCpuTime {
        type Intermediate = u64;
        type Value = u64;
        fn start(&self) -> u64 {
            now_ns()
        }
        fn end(&self, i: u64) -> u64 {
            now_ns().saturating_sub(i)
        }
        fn add(&self, a: &u64, b: &u64) -> u64 {
            a + b
        }
        fn zero(&self) -> u64 {
            0
        }
        fn to_f64(&self, v: &u64) -> f64 {
            *v as f64
        }
        fn formatter(&self) -> &dyn ValueFormatter {
            &Nanoseconds
        }
    }

    struct Nanoseconds;

    impl ValueFormatter for Nanoseconds {
        fn scale_values(&self, ns: f64, values: &mut [f64]) -> &'static str {
            let (factor, unit) = if ns < 1e3 {
                (1.0, "ns (cpu)")
            } else if ns < 1e6 {
                (1e-3, "µs (cpu)")
            } else {
                (1e-6, "ms (cpu)")
            };
            values.iter_mut().for_each(|v| *v *= factor);
            unit
        }
        fn scale_throughputs(&self, _: f64, _: &Throughput, _: &mut [f64]) -> &'static str {
            "ns (cpu)"
        }
        fn scale_for_machines(&self, _: &mut [f64]) -> &'static str {
            "ns"
        }
    }
}

#[cfg(unix)]
fn bench_spot_cpu(c: &mut Criterion<cpu::ThreadCpuTime>) {
    spot_steps(c, "cpu/");
    render_step(c, "cpu/");
}

#[cfg(unix)]
criterion_group! {
    name = cpu_benches;
    config = Criterion::default().with_measurement(cpu::ThreadCpuTime);
    targets = bench_spot_cpu
}
criterion_group!(benches, bench_spot);
#[cfg(unix)]
criterion_main!(benches, cpu_benches);
#[cfg(not(unix))]
criterion_main!(benches);
