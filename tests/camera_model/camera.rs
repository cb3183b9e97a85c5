//! The camera: a pinhole looking at the flat screen from up to 40 degrees off its normal, with mild
//! radial lens distortion, and the per-pixel map of where each pixel lands on the screen.
//!
//! Geometry (the pinhole model of common camera practice; see e.g. Hartley and Zisserman, "Multiple
//! View Geometry", chapter 6, cited from memory):
//! - the screen is the plane z = 0 of the world, with screen coordinates (u, v) in mm along world x
//!   and y (v points down the picture when the camera is square on);
//! - the camera aims at the screen point `aim` from `distance_mm` along its optical axis; its
//!   orientation is R = Rz(roll) Rx(tilt_v) Ry(tilt_u) (world to camera), so a camera turned by
//!   tilt_u about the screen's vertical sees the screen `tilt_u` off-axis; its centre is
//!   C = P_aim - D R^T e_z;
//! - a world point P goes to camera coordinates X = R (P - C), to normalised coordinates
//!   (x_n, y_n) = (X_x / X_z, X_y / X_z), through the radial distortion
//!   (x_d, y_d) = (1 + k1 r^2) (x_n, y_n) with r^2 = x_n^2 + y_n^2 (k1 < 0 is barrel distortion,
//!   typical of a webcam lens at a few per cent at the corners), and to pixels
//!   (c_x + f x_d, c_y + f y_d);
//! - back-projection undoes the distortion by fixed-point iteration (it converges for |k1 r^2| well
//!   below 1) and intersects the ray C + t R^T (x_n, y_n, 1) with z = 0.
//!
//! Foreshortening: near the aim point a screen step du maps to f cos(tilt_u) du / D pixels (exactly
//! f cos(a) du / (D + du sin(a)) for a pure turn), a step dv to f dv / D.

use nalgebra::{Matrix3, Vector3};

/// A pinhole camera with radial distortion, aimed at the screen.
#[derive(Debug, Clone)]
pub struct Camera {
    pub width: usize,
    pub height: usize,
    /// Focal length, px.
    pub focal_px: f64,
    /// Radial distortion coefficient on the normalised radius squared.
    pub k1: f64,
    /// Turn about the screen's vertical (v) axis, degrees: the off-axis angle along the scale.
    pub tilt_u_deg: f64,
    /// Turn about the screen's horizontal (u) axis, degrees.
    pub tilt_v_deg: f64,
    /// Turn about the optical axis, degrees.
    pub roll_deg: f64,
    /// Distance from the camera centre to the aim point along the optical axis, mm.
    pub distance_mm: f64,
    /// The screen point on the optical axis, mm.
    pub aim_mm: (f64, f64),
}

impl Default for Camera {
    /// A 1280 x 720 webcam (horizontal field of view about 49 degrees) half a metre from the screen,
    /// turned 30 degrees along the scale and 5 degrees across it: about 2.4 px/mm along the scale and
    /// 2.8 px/mm across it near the centre.
    fn default() -> Self {
        Self {
            width: 1280,
            height: 720,
            focal_px: 1400.0,
            k1: -0.05,
            tilt_u_deg: 30.0,
            tilt_v_deg: 5.0,
            roll_deg: 1.0,
            distance_mm: 500.0,
            aim_mm: (0.0, 0.0),
        }
    }
}

/// The camera's pose, derived once: world-to-camera rotation and centre.
#[derive(Debug, Clone)]
pub struct Pose {
    pub r: Matrix3<f64>,
    pub c: Vector3<f64>,
    camera: Camera,
}

fn rot_x(a: f64) -> Matrix3<f64> {
    let (s, c) = a.sin_cos();
    Matrix3::new(1.0, 0.0, 0.0, 0.0, c, -s, 0.0, s, c)
}

fn rot_y(a: f64) -> Matrix3<f64> {
    let (s, c) = a.sin_cos();
    Matrix3::new(c, 0.0, s, 0.0, 1.0, 0.0, -s, 0.0, c)
}

fn rot_z(a: f64) -> Matrix3<f64> {
    let (s, c) = a.sin_cos();
    Matrix3::new(c, -s, 0.0, s, c, 0.0, 0.0, 0.0, 1.0)
}

impl Camera {
    pub fn pose(&self) -> Pose {
        let r = rot_z(self.roll_deg.to_radians())
            * rot_x(self.tilt_v_deg.to_radians())
            * rot_y(self.tilt_u_deg.to_radians());
        let aim = Vector3::new(self.aim_mm.0, self.aim_mm.1, 0.0);
        let c = aim - self.distance_mm * (r.transpose() * Vector3::z());
        Pose {
            r,
            c,
            camera: self.clone(),
        }
    }

    fn principal(&self) -> (f64, f64) {
        (self.width as f64 / 2.0, self.height as f64 / 2.0)
    }
}

impl Pose {
    pub fn camera(&self) -> &Camera {
        &self.camera
    }

    /// Pixel position of the screen point (u, v) mm; `None` behind the camera.
    pub fn project(&self, u: f64, v: f64) -> Option<(f64, f64)> {
        let x = self.r * (Vector3::new(u, v, 0.0) - self.c);
        if x.z <= 0.0 {
            return None;
        }
        let (xn, yn) = (x.x / x.z, x.y / x.z);
        let k = 1.0 + self.camera.k1 * (xn * xn + yn * yn);
        let (cx, cy) = self.camera.principal();
        Some((
            cx + self.camera.focal_px * k * xn,
            cy + self.camera.focal_px * k * yn,
        ))
    }

    /// Screen point (u, v) mm seen at pixel (x, y); `None` when the ray misses the screen.
    pub fn back_project(&self, x: f64, y: f64) -> Option<(f64, f64)> {
        let (cx, cy) = self.camera.principal();
        let (xd, yd) = (
            (x - cx) / self.camera.focal_px,
            (y - cy) / self.camera.focal_px,
        );
        let (mut xn, mut yn) = (xd, yd);
        for _ in 0..30 {
            let k = 1.0 + self.camera.k1 * (xn * xn + yn * yn);
            xn = xd / k;
            yn = yd / k;
        }
        let d = self.r.transpose() * Vector3::new(xn, yn, 1.0);
        if d.z.abs() < 1e-12 {
            return None;
        }
        let t = -self.c.z / d.z;
        if t <= 0.0 {
            return None;
        }
        let p = self.c + t * d;
        Some((p.x, p.y))
    }
}

/// Where every pixel centre lands on the screen, and how far its footprint reaches along u and v
/// (from the finite-difference Jacobian of the back-projection: extent along u is
/// |du/dx| + |du/dy|, the box a pixel's parallelogram fits in).
#[derive(Debug, Clone)]
pub struct ScreenMap {
    pub width: usize,
    pub height: usize,
    /// Row-major (u, v) of each pixel centre, mm (NaN off the screen plane).
    pub uv: Vec<(f64, f64)>,
    /// Row-major footprint extent (along u, along v), mm.
    pub footprint: Vec<(f64, f64)>,
    /// Row-major natural vignetting cos^4 of the field angle.
    pub vignette: Vec<f64>,
}

impl ScreenMap {
    pub fn new(pose: &Pose) -> Self {
        let cam = pose.camera();
        let (w, h) = (cam.width, cam.height);
        let mut uv = Vec::with_capacity(w * h);
        for y in 0..h {
            for x in 0..w {
                uv.push(
                    pose.back_project(x as f64, y as f64)
                        .unwrap_or((f64::NAN, f64::NAN)),
                );
            }
        }
        let at = |x: usize, y: usize| uv[y * w + x];
        let mut footprint = Vec::with_capacity(w * h);
        let mut vignette = Vec::with_capacity(w * h);
        for y in 0..h {
            for x in 0..w {
                let (x0, x1) = (x.saturating_sub(1), (x + 1).min(w - 1));
                let (y0, y1) = (y.saturating_sub(1), (y + 1).min(h - 1));
                let (ax, bx) = (at(x0, y), at(x1, y));
                let (ay, by) = (at(x, y0), at(x, y1));
                let (sx, sy) = ((x1 - x0) as f64, (y1 - y0) as f64);
                let dudx = (bx.0 - ax.0) / sx;
                let dvdx = (bx.1 - ax.1) / sx;
                let dudy = (by.0 - ay.0) / sy;
                let dvdy = (by.1 - ay.1) / sy;
                footprint.push((dudx.abs() + dudy.abs(), dvdx.abs() + dvdy.abs()));
                let xn = (x as f64 - w as f64 / 2.0) / cam.focal_px;
                let yn = (y as f64 - h as f64 / 2.0) / cam.focal_px;
                vignette.push(1.0 / (1.0 + xn * xn + yn * yn).powi(2));
            }
        }
        Self {
            width: w,
            height: h,
            uv,
            footprint,
            vignette,
        }
    }
}
