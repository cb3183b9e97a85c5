//! The spot's path along the scale: the torsion-balance pattern, a damped oscillation about an
//! equilibrium that steps when the masses are moved.
//!
//! Between steps the scale reading x obeys x'' + 2 g x' + w0^2 (x - e) = 0 (a damped harmonic
//! oscillator about the equilibrium e), whose solution from (x0, v0) at the segment's start is
//! x - e = exp(-g t) ((x0 - e) cos(wd t) + (v0 + g (x0 - e)) / wd sin(wd t)), wd = sqrt(w0^2 - g^2).
//! At a step the position and velocity carry over and e changes. `period_s` is the damped period
//! 2 pi / wd and `decay_s` = 1 / g the amplitude's e-folding time.

#[derive(Debug, Clone)]
pub struct Swing {
    pub period_s: f64,
    pub decay_s: f64,
    /// Equilibrium at t = 0, mm along the scale.
    pub equilibrium_mm: f64,
    /// Position at t = 0, mm (the velocity starts at zero).
    pub start_mm: f64,
    /// (time s, new equilibrium mm), in time order.
    pub steps: Vec<(f64, f64)>,
}

impl Default for Swing {
    /// A 73 s period, 600 s decay, 30 mm initial swing, equilibrium steps of 12 mm at 130 s and
    /// back at 270 s.
    fn default() -> Self {
        Self {
            period_s: 73.0,
            decay_s: 600.0,
            equilibrium_mm: 0.0,
            start_mm: 30.0,
            steps: vec![(130.0, 12.0), (270.0, 0.0)],
        }
    }
}

impl Swing {
    fn advance(&self, x0: f64, v0: f64, e: f64, t: f64) -> (f64, f64) {
        let g = 1.0 / self.decay_s;
        let wd = 2.0 * std::f64::consts::PI / self.period_s;
        let y0 = x0 - e;
        let b = (v0 + g * y0) / wd;
        let (s, c) = (wd * t).sin_cos();
        let d = (-g * t).exp();
        let y = d * (y0 * c + b * s);
        let v = d * (-g * (y0 * c + b * s) + wd * (-y0 * s + b * c));
        (e + y, v)
    }

    /// Equilibrium in force at time t, mm.
    pub fn equilibrium(&self, t: f64) -> f64 {
        let mut e = self.equilibrium_mm;
        for &(ts, es) in &self.steps {
            if t >= ts {
                e = es;
            }
        }
        e
    }

    /// Position (mm) and velocity (mm/s) along the scale at time t.
    pub fn state(&self, t: f64) -> (f64, f64) {
        let (mut x, mut v, mut e, mut t0) = (self.start_mm, 0.0, self.equilibrium_mm, 0.0);
        for &(ts, es) in &self.steps {
            if ts > t {
                break;
            }
            (x, v) = self.advance(x, v, e, ts - t0);
            e = es;
            t0 = ts;
        }
        self.advance(x, v, e, t - t0)
    }

    pub fn position(&self, t: f64) -> f64 {
        self.state(t).0
    }
}
