//! The tilted, unevenly lit ruled screen shared by the spot tests, and the noise-limited bound of the
//! spot drawn on it.

use spotlever::synth::{CameraView, Illumination, LaserSpot, RuledScreen, Scene, Sensor};
use spotlever::units::ScreenPoint;

/// Spot sigma before blur, px; its peak, DN; sensor noise, DN; sensor blur, px.
const SIGMA: f64 = 3.0;
const PEAK: f64 = 160.0;
const NOISE: f64 = 2.0;
const BLUR: f64 = 0.7;

/// A 320 x 240 view at 4 px/mm of a screen tilted 25 and 8 degrees, lit with a gradient and
/// vignetting, with the ruling at `ink` reflectance and a sigma 3 px, 160 DN spot at `centre`
/// (sensor blur 0.7 px, 2 DN noise).
pub fn tilted_scene(ink: f64, centre: ScreenPoint) -> Scene {
    let (w, h) = (320, 240);
    let mut view = CameraView::square_on(ScreenPoint::default(), 4.0, w, h);
    view.tilt_y_deg = 25.0;
    view.tilt_x_deg = 8.0;
    Scene {
        width: w,
        height: h,
        screen_to_image: view.homography().unwrap(),
        screen: RuledScreen {
            ink_reflectance: ink,
            ..RuledScreen::default()
        },
        illumination: Illumination {
            gradient_x: 0.3,
            vignetting: 0.3,
            ..Illumination::default()
        },
        spot: Some(LaserSpot {
            centre,
            peak_dn: PEAK,
            sigma_px: SIGMA,
            speckle: None,
        }),
        sensor: Sensor {
            noise_dn: NOISE,
            blur_sigma_px: BLUR,
            white: 255,
        },
    }
}

/// Approximate bound on the RMS radial error for the spot of [`tilted_scene`].
///
/// Blur widens the spot to sigma_e = sqrt(sigma^2 + blur^2) and lowers its peak by
/// sigma^2 / sigma_e^2 (convolution of Gaussians). For a well-sampled Gaussian the per-axis bound
/// is s sqrt(2 / pi) / A, independent of the width (continuous approximation of the Fisher sum,
/// Kay, Fundamentals of Statistical Signal Processing vol. 1, ch. 3); it ignores the small coupling
/// to the other parameters.
pub fn tilted_scene_bound() -> f64 {
    let amp = PEAK * SIGMA * SIGMA / (SIGMA * SIGMA + BLUR * BLUR);
    let var = NOISE * NOISE + 1.0 / 12.0;
    (2.0 * var * 2.0 / (std::f64::consts::PI * amp * amp)).sqrt()
}
