//! The spot finder: where the reflected laser spot sits in one plane, to a fraction of a pixel, and how
//! much to trust it.
//!
//! [`Tracker`] is the stateful entry point used on a run (coarse search when the spot is unknown, then a
//! window around the predicted position, with a slowly following background estimate); [`locate`] is the
//! stateless one-shot search over a whole plane.
//!
//! How a position is made (never from the brightest pixel alone):
//! 1. coarse search (`search.rs`): 4 x 4 block means compared with a ring of blocks around them; the
//!    strongest local excess is the candidate, and a comparable second one makes the answer
//!    [`SpotStatus::Ambiguous`];
//! 2. local background (`background.rs`, see [`LocalBackground`]): a plane fitted robustly to a ring
//!    of pixels just outside the spot's reach (ruling lines and clipped pixels trimmed), smoothed over
//!    frames by the [`Tracker`]. The [`Tracker`] also learns the still screen pixel by pixel where the
//!    spot has moved away (`learned.rs`); where the spot's whole reach has been learned, that pattern is
//!    subtracted first and the ring plane only follows changes of room light;
//! 3. a thresholded, background-subtracted weighted centroid (`centroid.rs`);
//! 4. a least-squares 2-D Gaussian fit (`fit.rs`, on the `levenberg-marquardt` crate) over the
//!    unclipped pixels only, so a clipped core is located from its wings. The centroid is kept when
//!    the fit fails or wanders off.
//!
//! Known limit: without a learned screen (the one-shot [`locate`], a spot that has not moved, the first
//! frames of a run) the fit assumes a smooth background under the spot. Ruling lines crossing a small
//! spot distort it; on a 1 mm ruling seen at 4 px/mm with a sigma 3 px spot this costs about 0.07 to
//! 0.17 px RMS (see `tests/spot_accuracy.rs`), far more than the noise-limited figure on plain paper,
//! which a tracked, moving spot regains (`tests/spot_screen_model.rs`).

mod background;
mod centroid;
mod fit;
mod learned;
mod measure;
mod search;
mod strength;
mod tracker;
mod view;

pub use background::LocalBackground;
pub use tracker::Tracker;

pub use crate::frame::Roi;
use crate::frame::{Pixels, Plane};
use crate::units::PixelPoint;
use ndarray::Array2;
use serde::{Deserialize, Serialize};
use view::{Img, Pixel, Rect, StudioLuma};

/// How a located spot should be read.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum SpotStatus {
    /// A clean, unclipped spot.
    Ok,
    /// Found, but its core is clipped; the position comes from the unclipped wings.
    Saturated,
    /// No spot stands out of the background.
    Lost,
    /// Something stands out, but far too faint or small for the run's spot (a blocked or half-blocked
    /// beam, a stray reflection); no position is given.
    Weak,
    /// Two comparable spots exist; the position is the stronger one's and should not be trusted.
    Ambiguous,
    /// The frame itself could not be decoded.
    Unreadable,
}

impl SpotStatus {
    pub fn as_str(self) -> &'static str {
        match self {
            SpotStatus::Ok => "ok",
            SpotStatus::Saturated => "saturated",
            SpotStatus::Lost => "lost",
            SpotStatus::Weak => "weak",
            SpotStatus::Ambiguous => "ambiguous",
            SpotStatus::Unreadable => "unreadable",
        }
    }
    pub fn parse(s: &str) -> Option<Self> {
        Some(match s {
            "ok" => SpotStatus::Ok,
            "saturated" => SpotStatus::Saturated,
            "lost" => SpotStatus::Lost,
            "weak" => SpotStatus::Weak,
            "ambiguous" => SpotStatus::Ambiguous,
            "unreadable" => SpotStatus::Unreadable,
            _ => return None,
        })
    }
    /// Whether the position is usable for analysis.
    pub fn has_position(self) -> bool {
        matches!(self, SpotStatus::Ok | SpotStatus::Saturated)
    }
}

/// The finder's answer for one plane.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SpotFix {
    /// Subpixel centre; `None` when lost or unreadable.
    pub position: Option<PixelPoint>,
    /// Peak value above background, DN: the fitted Gaussian's amplitude (extrapolated through a clipped
    /// core), or the observed peak when no fit was made.
    pub peak: f64,
    /// Background-subtracted sum over the spot, DN.
    pub integral: f64,
    /// RMS radius of the spot, px (sqrt(2) times the Gaussian sigma).
    pub width_px: f64,
    /// Number of clipped pixels in the fitted window around the spot.
    pub saturated_px: u32,
    /// Peak over the standard deviation of the local background (sensor noise plus screen texture).
    pub snr: f64,
    pub status: SpotStatus,
}

impl SpotFix {
    /// The answer for a frame with nothing usable in it.
    pub fn without_position(status: SpotStatus) -> Self {
        Self {
            position: None,
            peak: 0.0,
            integral: 0.0,
            width_px: 0.0,
            saturated_px: 0,
            snr: 0.0,
            status,
        }
    }
}

/// Settings of the spot finder. Build with `SpotConfig { roi, ..SpotConfig::default() }`.
#[derive(Debug, Clone, PartialEq)]
pub struct SpotConfig {
    /// Only look inside this rectangle (cut to the image).
    pub roi: Option<Roi>,
    /// Largest Gaussian sigma of the spot the windows are sized for, px (default 6). Wider spots are
    /// still found, but measured in a window that is too small for them.
    pub max_sigma_px: f64,
    /// A spot whose fitted peak is below this many background standard deviations is lost (default 6).
    pub min_snr: f64,
    /// A second spot whose search contrast is at least this fraction of the first's makes the answer
    /// ambiguous (default 0.5).
    pub ambiguity_ratio: f64,
    /// Half-size of the tracking window around the predicted position, px (default 24): how far the spot
    /// may stray from the prediction between two frames before a full search is needed.
    pub track_radius_px: usize,
    /// Weight of each new frame in the tracker's smoothed background, 0 to 1 (default 0.2; 1 = no
    /// smoothing).
    pub background_weight: f64,
    /// Also run a full search every this many tracked frames, to notice a second spot (0 = only when
    /// lost; default 0).
    pub full_search_every: u32,
    /// Refine the centroid with a Gaussian fit (default true).
    pub fit: bool,
}

impl Default for SpotConfig {
    fn default() -> Self {
        Self {
            roi: None,
            max_sigma_px: 6.0,
            min_snr: 6.0,
            ambiguity_ratio: 0.5,
            track_radius_px: 24,
            background_weight: 0.2,
            full_search_every: 0,
            fit: true,
        }
    }
}

impl SpotConfig {
    /// Radius of the background ring around a spot, px: three of the largest sigmas plus a margin.
    pub(crate) fn reach_px(&self) -> usize {
        let s = if self.max_sigma_px.is_finite() {
            self.max_sigma_px.clamp(0.5, 50.0)
        } else {
            6.0
        };
        (3.0 * s).ceil() as usize + 4
    }

    /// The same settings with every number forced into a usable range.
    pub(crate) fn sanitised(&self) -> SpotConfig {
        let finite_or = |v: f64, d: f64| if v.is_finite() { v } else { d };
        SpotConfig {
            roi: self.roi,
            max_sigma_px: finite_or(self.max_sigma_px, 6.0).clamp(0.5, 50.0),
            min_snr: finite_or(self.min_snr, 6.0).max(0.0),
            ambiguity_ratio: finite_or(self.ambiguity_ratio, 0.5).max(0.0),
            track_radius_px: self.track_radius_px.max(4),
            background_weight: finite_or(self.background_weight, 0.2).clamp(0.0, 1.0),
            full_search_every: self.full_search_every,
            fit: self.fit,
        }
    }
}

/// One-shot search over the whole plane (or the configured ROI): coarse search, then measurement of the
/// strongest candidate. `Lost` when nothing stands out, `Ambiguous` when a comparable second spot exists.
pub fn locate(plane: &Plane, config: &SpotConfig) -> SpotFix {
    with_image(plane, Locate(config))
}

/// The job of [`locate`].
struct Locate<'c>(&'c SpotConfig);

impl ImageJob for Locate<'_> {
    type Output = SpotFix;

    fn run<P: Pixel>(self, img: &Img<P>) -> SpotFix {
        let config = self.0.sanitised();
        match Rect::for_image(img.w, img.h, config.roi) {
            Some(rect) => full_search(img, &rect, &config, None, &mut |b| b).0,
            None => SpotFix::without_position(SpotStatus::Lost),
        }
    }
}

/// Work done on a row-major view of a plane, whichever pixel type the plane stores.
pub(crate) trait ImageJob {
    type Output;
    fn run<P: Pixel>(self, img: &Img<P>) -> Self::Output;
}

/// Run `job` on a row-major view of `plane`'s own pixels, copying them first only if their storage is
/// not in standard layout.
pub(crate) fn with_image<J: ImageJob>(plane: &Plane, job: J) -> J::Output {
    match plane.pixels() {
        Pixels::Eight(a) => with_array(a, plane.white, job),
        Pixels::Sixteen(a) => with_array(a, plane.white, job),
        Pixels::Studio(a) => {
            let std = a.as_standard_layout();
            match std.as_slice() {
                Some(bytes) => job.run(&Img {
                    data: StudioLuma::slice(bytes),
                    w: std.ncols(),
                    h: std.nrows(),
                    white: plane.white,
                }),
                None => with_array(&a.mapv(StudioLuma), plane.white, job),
            }
        }
    }
}

fn with_array<P: Pixel, J: ImageJob>(a: &Array2<P>, white: u16, job: J) -> J::Output {
    // A view when the array is already standard layout, a copy otherwise.
    let std = a.as_standard_layout();
    match std.as_slice() {
        Some(data) => job.run(&Img {
            data,
            w: std.ncols(),
            h: std.nrows(),
            white,
        }),
        None => job.run(&Img::<P> {
            data: &[],
            w: 0,
            h: 0,
            white,
        }),
    }
}

/// Coarse search of `rect` and measurement of the best candidate, with the background passed through
/// `filter` (on top of the learned `screen`, where it covers the spot). Returns the answer and the
/// background used (when a spot was measured).
pub(crate) fn full_search<P: Pixel>(
    img: &Img<P>,
    rect: &Rect,
    config: &SpotConfig,
    screen: Option<&learned::ScreenModel>,
    filter: &mut dyn FnMut(LocalBackground) -> LocalBackground,
) -> (SpotFix, Option<LocalBackground>) {
    let found = search::coarse_search(img, rect, config.max_sigma_px);
    // Block means average 16 pixels, so the block contrast's spread is about a quarter of the pixel
    // noise; the floor keeps a noise-free blank frame from counting rounding steps as a spot.
    let floor = found.noise.max(0.25);
    let significant =
        |c: &search::Candidate| c.contrast >= config.min_snr * floor && c.contrast >= 2.0;
    let Some(best) = found.best.filter(significant) else {
        return (SpotFix::without_position(SpotStatus::Lost), None);
    };
    let seed = measure::brightest_patch(img, rect, best.x, best.y, search::BLOCK);
    let Some(m) = measure::measure(img, rect, seed, config, screen, filter) else {
        return (SpotFix::without_position(SpotStatus::Lost), None);
    };
    let mut fix = judge(m.fix, config);
    let rival = found
        .second
        .filter(significant)
        .filter(|s| s.contrast >= config.ambiguity_ratio * best.contrast);
    if fix.position.is_some() && rival.is_some() {
        fix.status = SpotStatus::Ambiguous;
    }
    (fix, Some(m.background))
}

/// Turn a measurement into `Lost` when it does not stand out enough.
pub(crate) fn judge(fix: SpotFix, config: &SpotConfig) -> SpotFix {
    judge_with(fix, fix.snr >= config.min_snr)
}

/// The same for a spot already being followed, found again where it was predicted (hysteresis, common
/// practice in tracking, no source): its peak may dip to half of `min_snr` while the whole spot stays
/// clearly significant. The whole-spot figure is the amplitude over its standard error in white noise,
/// peak sqrt(pi) sigma / noise (from sum g^2 = pi sigma^2 for a unit Gaussian sampled on the pixel
/// grid), and must reach twice `min_snr`; a noise-only window stays far below that, because a narrow
/// noise bump has a small sigma and a wide one a small peak.
pub(crate) fn judge_tracked(fix: SpotFix, config: &SpotConfig) -> SpotFix {
    let sigma = fix.width_px / std::f64::consts::SQRT_2;
    let whole = fix.snr * std::f64::consts::PI.sqrt() * sigma;
    judge_with(
        fix,
        fix.snr >= 0.5 * config.min_snr && whole >= 2.0 * config.min_snr,
    )
}

/// A spot is kept only when it stands out and its light is real: a negative integral or a
/// non-positive peak means the background was brighter than the "spot" (a shadow, a dark stripe), which
/// no laser spot can make.
fn judge_with(fix: SpotFix, stands_out: bool) -> SpotFix {
    let real_light =
        fix.integral.is_finite() && fix.integral > 0.0 && fix.peak.is_finite() && fix.peak > 0.0;
    if stands_out && real_light && fix.position.is_some() {
        fix
    } else {
        SpotFix {
            position: None,
            status: SpotStatus::Lost,
            ..fix
        }
    }
}
