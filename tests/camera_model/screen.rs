//! The screen's print and the room's light on it.
//!
//! Ruling: dark printed lines on white paper multiply whatever light falls on the screen (the
//! paper's reflectance is reduced by the ink's absorption where a line is). A pixel sees the mean
//! transmission over its footprint; for a family of lines of width w and pitch p centred on
//! multiples of p, the covered length in [0, s] (shifted by w/2) is n w + min(r, w) with
//! n = floor(s / p), r = s - n p, so the covered fraction of any interval follows exactly. Minor and
//! major families along u and along v multiply (ink printed over ink), so a fine grid is
//! T(u, v) = T_u(u) T_v(v) with T_u = (1 - a_minor f_minor(u)) (1 - a_major f_major(u)). Over a
//! whole pitch the mean is 1 - a w / p. Over a pixel footprint the families are averaged one by
//! one and then multiplied, which is exact for one family and for lines one way, and slightly too
//! light where a minor line lies under a major one (the mean of a product taken as the product of
//! means; under 1 % of the light over a 10 mm period for the default ruling).
//!
//! Room light: the irradiance from a ceiling lamp treated as a point at height h over the screen
//! plane falls as cos^3 / r^2, i.e. E ∝ h / r^3 (the inverse-square and Lambert cosine laws),
//! normalised to 1 at the aim point; its level steps (a light switched) and ramps (daylight) over
//! time; a soft-edged dark band (a person's shadow, edges as tanh of width `edge_mm`) crosses the
//! screen at a steady speed. The camera adds natural vignetting cos^4 of the field angle.

/// Printed lines: one family (minor or major), the same along u and v.
#[derive(Debug, Clone, Copy)]
pub struct Lines {
    pub pitch_mm: f64,
    pub width_mm: f64,
    /// Fraction of the light the ink absorbs, 0..1.
    pub absorption: f64,
}

/// The ruled screen.
#[derive(Debug, Clone)]
pub struct Ruling {
    pub minor: Lines,
    pub major: Lines,
    /// Whether lines run both ways (a grid) or only across the scale (ticks along u).
    pub grid: bool,
}

impl Default for Ruling {
    /// Millimetre graph paper: 0.2 mm lines every 1 mm absorbing 60 %, 0.4 mm lines every 10 mm
    /// absorbing 85 %.
    fn default() -> Self {
        Self {
            minor: Lines {
                pitch_mm: 1.0,
                width_mm: 0.2,
                absorption: 0.6,
            },
            major: Lines {
                pitch_mm: 10.0,
                width_mm: 0.4,
                absorption: 0.85,
            },
            grid: true,
        }
    }
}

impl Lines {
    /// Ink-covered length of [0, s] (any sign of s handled by the floor).
    fn covered(&self, s: f64) -> f64 {
        let s = s + self.width_mm / 2.0;
        let n = (s / self.pitch_mm).floor();
        let r = s - n * self.pitch_mm;
        n * self.width_mm + r.min(self.width_mm)
    }

    /// Fraction of [c - d/2, c + d/2] covered by ink (the point value when d is tiny).
    pub fn fraction(&self, c: f64, d: f64) -> f64 {
        if d < 1e-9 {
            let s = (c + self.width_mm / 2.0).rem_euclid(self.pitch_mm);
            return if s < self.width_mm { 1.0 } else { 0.0 };
        }
        ((self.covered(c + d / 2.0) - self.covered(c - d / 2.0)) / d).clamp(0.0, 1.0)
    }

    fn transmission(&self, c: f64, d: f64) -> f64 {
        1.0 - self.absorption * self.fraction(c, d)
    }
}

impl Ruling {
    /// No lines at all (plain paper).
    pub fn none() -> Self {
        let none = Lines {
            pitch_mm: 1.0,
            width_mm: 0.0,
            absorption: 0.0,
        };
        Self {
            minor: none,
            major: none,
            grid: false,
        }
    }

    /// Mean transmission over a footprint (du, dv) mm centred on (u, v).
    pub fn transmission(&self, u: f64, v: f64, du: f64, dv: f64) -> f64 {
        let along = self.minor.transmission(u, du) * self.major.transmission(u, du);
        if !self.grid {
            return along;
        }
        along * self.minor.transmission(v, dv) * self.major.transmission(v, dv)
    }
}

/// A soft-edged shadow band crossing the screen along u.
#[derive(Debug, Clone, Copy)]
pub struct Shadow {
    /// When the band's centre is at `from_u_mm`, s.
    pub start_s: f64,
    pub from_u_mm: f64,
    /// Speed of the band along u, mm/s.
    pub speed_mm_s: f64,
    pub width_mm: f64,
    pub edge_mm: f64,
    /// Fraction of the room light the band takes away at its middle.
    pub depth: f64,
    /// The band exists from `start_s` for this long, s.
    pub duration_s: f64,
}

/// The room light on the screen over time.
#[derive(Debug, Clone)]
pub struct RoomLight {
    /// Photo-electrons per pixel per exposure from the room light on bare paper at the aim point.
    pub level_e: f64,
    /// The lamp's place: (u, v) mm on the screen plane and its height over it, mm.
    pub lamp_mm: (f64, f64, f64),
    /// (time s, factor): the level is multiplied by `factor` from `time` on.
    pub steps: Vec<(f64, f64)>,
    /// (from s, to s, fractional change): the level drifts linearly by this fraction over the span.
    pub ramps: Vec<(f64, f64, f64)>,
    pub shadows: Vec<Shadow>,
}

impl Default for RoomLight {
    fn default() -> Self {
        Self {
            level_e: 2000.0,
            lamp_mm: (-400.0, -600.0, 900.0),
            steps: Vec::new(),
            ramps: Vec::new(),
            shadows: Vec::new(),
        }
    }
}

impl RoomLight {
    /// The level's factor at time t (steps times ramps).
    pub fn level_factor(&self, t: f64) -> f64 {
        let mut f = 1.0;
        for &(ts, k) in &self.steps {
            if t >= ts {
                f *= k;
            }
        }
        for &(a, b, k) in &self.ramps {
            let x = ((t - a) / (b - a)).clamp(0.0, 1.0);
            f *= 1.0 + k * x;
        }
        f
    }

    /// Lamp irradiance at (u, v) relative to that at `aim`: h / r^3 normalised.
    pub fn lamp(&self, u: f64, v: f64, aim: (f64, f64)) -> f64 {
        let (lu, lv, h) = self.lamp_mm;
        let r3 = |a: f64, b: f64| ((a - lu).powi(2) + (b - lv).powi(2) + h * h).powf(1.5);
        r3(aim.0, aim.1) / r3(u, v)
    }

    /// The fraction of room light left at u by the shadows at time t.
    pub fn shadow_factor(&self, u: f64, t: f64) -> f64 {
        let mut f = 1.0;
        for s in &self.shadows {
            if t < s.start_s || t > s.start_s + s.duration_s {
                continue;
            }
            let c = s.from_u_mm + s.speed_mm_s * (t - s.start_s);
            let (a, b) = (c - s.width_mm / 2.0, c + s.width_mm / 2.0);
            let band = 0.5 * (((u - a) / s.edge_mm).tanh() - ((u - b) / s.edge_mm).tanh());
            f *= 1.0 - s.depth * band;
        }
        f
    }

    /// Whether any shadow is on the screen at time t.
    pub fn shadow_active(&self, t: f64) -> bool {
        self.shadows
            .iter()
            .any(|s| t >= s.start_s && t <= s.start_s + s.duration_s)
    }
}
