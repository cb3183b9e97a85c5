//! Following the spot from frame to frame: full search when the spot is unknown, then a small window
//! around a constant-velocity prediction, with the background smoothed over frames.

use super::background::{BackgroundFollower, LocalBackground};
use super::learned::ScreenModel;
use super::strength::RunStrength;
use super::view::{Img, Pixel, Rect};
use super::{
    full_search, judge_tracked, measure, with_image, ImageJob, SpotConfig, SpotFix, SpotStatus,
};
use crate::frame::Plane;
use crate::units::PixelPoint;

/// Follows the spot frame to frame.
///
/// The first frame, and any frame after the spot was lost, gets a full search of the image (or ROI);
/// otherwise the spot is looked for within `track_radius_px` of where it is predicted to be (last
/// position plus last step). If it is not found there, or sits at the window's edge, a full search
/// follows in the same frame. A change of image size starts afresh.
///
/// A spot whose light is far below that of the spots found lately is `weak` and given no position
/// (see [`super::strength`]): a blocked beam does not become data.
#[derive(Debug, Clone)]
pub struct Tracker {
    config: SpotConfig,
    last: Option<PixelPoint>,
    previous: Option<PixelPoint>,
    background: BackgroundFollower,
    screen: ScreenModel,
    strength: RunStrength,
    since_search: u32,
    size: (usize, usize),
}

impl Tracker {
    pub fn new(config: SpotConfig) -> Self {
        Self {
            config: config.sanitised(),
            last: None,
            previous: None,
            background: BackgroundFollower::default(),
            screen: ScreenModel::default(),
            strength: RunStrength::default(),
            since_search: 0,
            size: (0, 0),
        }
    }

    /// The settings in use (numbers forced into their usable ranges).
    pub fn config(&self) -> &SpotConfig {
        &self.config
    }

    /// The smoothed local background around the spot, after the last processed frame.
    pub fn background(&self) -> Option<LocalBackground> {
        self.background.current()
    }

    /// Forget the spot, so the next frame gets a full search.
    pub fn reset(&mut self) {
        self.last = None;
        self.previous = None;
        self.background.reset();
        self.since_search = 0;
    }

    /// Locate the spot in the next plane of the run.
    pub fn process(&mut self, plane: &Plane) -> SpotFix {
        with_image(plane, Step(self))
    }

    fn process_image<P: Pixel>(&mut self, img: &Img<P>) -> SpotFix {
        if self.size != (img.w, img.h) {
            self.reset();
            self.strength.reset();
            self.size = (img.w, img.h);
        }
        let Some(rect) = Rect::for_image(img.w, img.h, self.config.roi) else {
            self.reset();
            return SpotFix::without_position(SpotStatus::Lost);
        };
        let due =
            self.config.full_search_every > 0 && self.since_search >= self.config.full_search_every;
        let tracked = match self.last {
            Some(last) if !due => self.track(img, &rect, last),
            _ => None,
        };
        let found = match tracked {
            Some(fix) => {
                self.since_search += 1;
                fix
            }
            None => {
                self.since_search = 0;
                let (weight, reset) = self.weights();
                let follower = &mut self.background;
                let (fix, _) =
                    full_search(img, &rect, &self.config, Some(&self.screen), &mut |b| {
                        follower.update(b, weight, reset)
                    });
                fix
            }
        };
        let fix = self.weigh(found);
        match fix.position {
            Some(p) if fix.status.has_position() || fix.status == SpotStatus::Ambiguous => {
                self.previous = self.last;
                self.last = Some(p);
                if fix.status.has_position() {
                    // The screen seen around the spot, as far as the spot could travel in a few
                    // frames, so the places it will cover next are known.
                    let reach = self.config.reach_px();
                    let half = 3 * reach + self.config.track_radius_px;
                    self.screen.learn(img, &rect, p, reach, half);
                }
            }
            _ => {
                self.last = None;
                self.previous = None;
                self.background.reset();
            }
        }
        fix
    }

    /// A found spot with far less light than the run's is `weak`, without a position; a kept one
    /// joins the run's strength.
    fn weigh(&mut self, fix: SpotFix) -> SpotFix {
        if !fix.status.has_position() {
            return fix;
        }
        if self.strength.is_weak(fix.integral) {
            return SpotFix {
                position: None,
                status: SpotStatus::Weak,
                ..fix
            };
        }
        self.strength.learn(fix.integral);
        fix
    }

    fn weights(&self) -> (f64, f64) {
        (
            self.config.background_weight,
            self.config.track_radius_px as f64 / 2.0,
        )
    }

    /// Look for the spot near its predicted place; `None` when it is not convincingly there.
    fn track<P: Pixel>(&mut self, img: &Img<P>, rect: &Rect, last: PixelPoint) -> Option<SpotFix> {
        let r = self.config.track_radius_px;
        let predicted = match self.previous {
            Some(p) => {
                let (vx, vy) = (last.x - p.x, last.y - p.y);
                let lim = r as f64 / 2.0;
                PixelPoint {
                    x: last.x + vx.clamp(-lim, lim),
                    y: last.y + vy.clamp(-lim, lim),
                }
            }
            None => last,
        };
        let win = rect.around(predicted.x, predicted.y, r)?;
        let seed = measure::brightest_patch(
            img,
            &win,
            predicted.x.round().max(0.0) as usize,
            predicted.y.round().max(0.0) as usize,
            r,
        );
        // A seed on the window's edge (where the window is not the ROI's edge) means the spot may lie
        // beyond it.
        let edge = |v: usize, lo: usize, hi: usize, rlo: usize, rhi: usize| {
            (v <= lo + 1 && lo > rlo) || (v + 2 >= hi && hi < rhi)
        };
        if edge(seed.0, win.x0, win.x1, rect.x0, rect.x1)
            || edge(seed.1, win.y0, win.y1, rect.y0, rect.y1)
        {
            return None;
        }
        let (weight, reset) = self.weights();
        let follower = &mut self.background;
        let m = measure::measure(
            img,
            rect,
            seed,
            &self.config,
            Some(&self.screen),
            &mut |b| follower.update(b, weight, reset),
        )?;
        let fix = judge_tracked(m.fix, &self.config);
        fix.position.is_some().then_some(fix)
    }
}

/// One call of [`Tracker::process`], as a job on the plane's own pixels.
struct Step<'t>(&'t mut Tracker);

impl ImageJob for Step<'_> {
    type Output = SpotFix;

    fn run<P: Pixel>(self, img: &Img<P>) -> SpotFix {
        self.0.process_image(img)
    }
}
