//! The camera: where a stage point lands on the picture, and how large a
//! millimetre of stage looks there.
//!
//! Orthographic views look straight at the stage from one side and map a
//! viewport (metres) onto the pixels exactly as `docs/conventions.md` ("Viewport") gives it:
//! pixel column i, row j (row 0 at the top) covers the screen point
//! `u = X0 + (i + 0.5)(X1 - X0)/W`, `v = Y1 - (j + 0.5)(Y1 - Y0)/H`.
//! The perspective camera is a pinhole at an eye point looking at a target,
//! with a vertical field of view.

use crate::geom::Vec3;

use crate::num;

/// Which side an orthographic view looks from.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum View {
    /// The audience's view, looking along -z: screen (u, v) = (x, y).
    Front,
    /// From the audience's left, looking along +x: screen (u, v) = (z, y),
    /// so the audience is on the right and the wheel plane's clock runs clockwise.
    Side,
    /// From above, looking down: screen (u, v) = (x, -z), upstage at the top,
    /// so the floor plane's clock runs clockwise.
    Top,
}

impl View {
    /// The name used on the command line.
    pub fn name(self) -> &'static str {
        match self {
            View::Front => "front",
            View::Side => "side",
            View::Top => "top",
        }
    }

    /// The view with that name.
    pub fn from_name(name: &str) -> Option<View> {
        [View::Front, View::Side, View::Top]
            .into_iter()
            .find(|v| v.name() == name)
    }

    /// Screen coordinates (u right, v up), metres, of stage point `p` (metres).
    pub fn screen(self, p: &Vec3) -> [f64; 2] {
        match self {
            View::Front => [p.x, p.y],
            View::Side => [p.z, p.y],
            View::Top => [p.x, -p.z],
        }
    }
}

/// A pinhole camera placed on the stage or in the house.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Pinhole {
    /// Eye point, stage coordinates, metres.
    pub eye_m: Vec3,
    /// The point it looks at, stage coordinates, metres (`None`: the middle of the light).
    pub look_at_m: Option<Vec3>,
    /// Vertical field of view, degrees (0 < fov < 180).
    pub fov_deg: f64,
}

/// Where a stage point lands on the picture.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Projected {
    /// Column coordinate in pixels (pixel i covers [i, i + 1)).
    pub px: f64,
    /// Row coordinate in pixels, row 0 at the top (pixel j covers [j, j + 1)).
    pub py: f64,
    /// Pixels per metre across, at that point.
    pub scale_x: f64,
    /// Pixels per metre down, at that point.
    pub scale_y: f64,
    /// Relative irradiance on the sensor: (reference distance / distance)^2
    /// for the pinhole (inverse-square law), 1 in orthographic views.
    pub gain: f64,
}

#[derive(Clone, Copy, Debug, PartialEq)]
enum Kind {
    Ortho {
        view: View,
        viewport: [f64; 4],
    },
    Pinhole {
        eye: Vec3,
        target: Vec3,
        right: Vec3,
        up: Vec3,
        forward: Vec3,
        focal_px: f64,
        ref_dist: f64,
    },
}

/// A camera with its picture size: projects stage points to pixels.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Camera {
    /// Picture width, pixels.
    pub width: u32,
    /// Picture height, pixels.
    pub height: u32,
    kind: Kind,
}

/// Closest distance in front of the pinhole that is still drawn, metres.
pub const NEAR_M: f64 = 0.01;

impl Camera {
    /// An orthographic camera: `viewport` = [X0, Y0, X1, Y1] in the view's
    /// screen coordinates (metres), X1 > X0, Y1 > Y0.
    pub fn ortho(view: View, viewport: [f64; 4], width: u32, height: u32) -> Self {
        Camera {
            width,
            height,
            kind: Kind::Ortho { view, viewport },
        }
    }

    /// A pinhole camera at `eye` looking at `target` with a vertical field of
    /// view of `fov_deg`; `None` when the eye is on the target or the field
    /// of view is outside (0, 180) degrees. Up on the picture is stage +y
    /// (upstage, -z, when looking straight down or up).
    pub fn pinhole(eye: Vec3, target: Vec3, fov_deg: f64, width: u32, height: u32) -> Option<Self> {
        let d = target - eye;
        let ref_dist = d.norm();
        let ok = ref_dist > 1e-9 && fov_deg > 0.0 && fov_deg < 180.0;
        if !ok {
            return None;
        }
        let forward = d / ref_dist;
        let mut hint = Vec3::new(0.0, 1.0, 0.0);
        if forward.cross(&hint).norm() < 1e-6 {
            hint = Vec3::new(0.0, 0.0, -1.0);
        }
        let right = forward.cross(&hint).normalize();
        let up = right.cross(&forward);
        let half = num::rad(fov_deg) * 0.5;
        let focal_px = 0.5 * f64::from(height) * num::cos(half) / num::sin(half);
        Some(Camera {
            width,
            height,
            kind: Kind::Pinhole {
                eye,
                target,
                right,
                up,
                forward,
                focal_px,
                ref_dist,
            },
        })
    }

    /// The orthographic view and viewport, or `None` for a pinhole camera.
    pub fn viewport(&self) -> Option<(View, [f64; 4])> {
        match self.kind {
            Kind::Ortho { view, viewport } => Some((view, viewport)),
            Kind::Pinhole { .. } => None,
        }
    }

    /// The pinhole's eye and target (metres), or `None` when orthographic.
    pub fn eye_and_target(&self) -> Option<(Vec3, Vec3)> {
        match self.kind {
            Kind::Pinhole { eye, target, .. } => Some((eye, target)),
            Kind::Ortho { .. } => None,
        }
    }

    /// Pixels per metre (across, down) in an orthographic view; for the
    /// pinhole, at the distance `depth_m` in front of it.
    pub fn pixels_per_m(&self, depth_m: f64) -> (f64, f64) {
        match self.kind {
            Kind::Ortho { viewport: v, .. } => (
                f64::from(self.width) / (v[2] - v[0]),
                f64::from(self.height) / (v[3] - v[1]),
            ),
            Kind::Pinhole { focal_px, .. } => {
                let s = focal_px / depth_m.max(NEAR_M);
                (s, s)
            }
        }
    }

    /// Distance of `p` in front of the pinhole along its axis, metres
    /// (`None` in orthographic views).
    pub fn depth(&self, p: &Vec3) -> Option<f64> {
        match self.kind {
            Kind::Pinhole { eye, forward, .. } => Some((p - eye).dot(&forward)),
            Kind::Ortho { .. } => None,
        }
    }

    /// Where stage point `p` (metres) lands, or `None` when it is behind the
    /// pinhole (nearer than [`NEAR_M`]).
    pub fn project(&self, p: &Vec3) -> Option<Projected> {
        match self.kind {
            Kind::Ortho { view, viewport: v } => {
                let [u, w] = view.screen(p);
                let sx = f64::from(self.width) / (v[2] - v[0]);
                let sy = f64::from(self.height) / (v[3] - v[1]);
                Some(Projected {
                    px: (u - v[0]) * sx,
                    py: (v[3] - w) * sy,
                    scale_x: sx,
                    scale_y: sy,
                    gain: 1.0,
                })
            }
            Kind::Pinhole {
                eye,
                right,
                up,
                forward,
                focal_px,
                ref_dist,
                ..
            } => {
                let d = p - eye;
                let z = d.dot(&forward);
                if z < NEAR_M {
                    return None;
                }
                let s = focal_px / z;
                let dist2 = d.norm_squared();
                Some(Projected {
                    px: 0.5 * f64::from(self.width) + s * d.dot(&right),
                    py: 0.5 * f64::from(self.height) - s * d.dot(&up),
                    scale_x: s,
                    scale_y: s,
                    gain: ref_dist * ref_dist / dist2,
                })
            }
        }
    }
}

/// The smallest viewport of the picture's aspect ratio (width / height, in
/// pixels) that holds the box `lo..hi` (screen metres) grown by `margin_m`
/// on every side, centred on the box.
pub fn fit_viewport(
    lo: [f64; 2],
    hi: [f64; 2],
    margin_m: f64,
    width: u32,
    height: u32,
) -> [f64; 4] {
    let cx = 0.5 * (lo[0] + hi[0]);
    let cy = 0.5 * (lo[1] + hi[1]);
    let mut w = (hi[0] - lo[0]).max(0.0) + 2.0 * margin_m;
    let mut h = (hi[1] - lo[1]).max(0.0) + 2.0 * margin_m;
    let aspect = f64::from(width) / f64::from(height);
    if w / h > aspect {
        h = w / aspect;
    } else {
        w = h * aspect;
    }
    [cx - 0.5 * w, cy - 0.5 * h, cx + 0.5 * w, cy + 0.5 * h]
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::Plane;

    #[test]
    fn ortho_maps_pixel_centres_as_the_conventions_give() {
        // docs/conventions.md, "Viewport": column i covers x = X0 + (i + 0.5)(X1 - X0)/W.
        let cam = Camera::ortho(View::Front, [-1.8, 0.4, 1.8, 2.4], 360, 200);
        let (i, j) = (17.0, 150.0);
        let x = -1.8 + (i + 0.5) * 3.6 / 360.0;
        let y = 2.4 - (j + 0.5) * 2.0 / 200.0;
        let p = cam.project(&Vec3::new(x, y, 0.7)).unwrap();
        assert!((p.px - (i + 0.5)).abs() < 1e-9 && (p.py - (j + 0.5)).abs() < 1e-9);
    }

    #[test]
    fn each_view_shows_its_planes_clock_running_clockwise() {
        // docs/conventions.md, "Planes and clock angles": 90 degrees lies along `right`
        // and 0 along its `up`; seen from the front (wall), the audience's
        // left (wheel) and above (floor), 3 o'clock is on the right and
        // 12 o'clock at the top.
        let cases = [
            (View::Front, Plane::Wall),
            (View::Side, Plane::Wheel),
            (View::Top, Plane::Floor),
        ];
        for (view, plane) in cases {
            assert_eq!(view.screen(&plane.right()), [1.0, 0.0], "{view:?}");
            assert_eq!(view.screen(&plane.up()), [0.0, 1.0], "{view:?}");
        }
    }

    #[test]
    fn pinhole_from_the_house_sees_stage_right_on_the_right() {
        let cam = Camera::pinhole(
            Vec3::new(0.0, 1.5, 6.0),
            Vec3::new(0.0, 1.5, 0.0),
            40.0,
            400,
            300,
        )
        .unwrap();
        let c = cam.project(&Vec3::new(0.0, 1.5, 0.0)).unwrap();
        assert!((c.px - 200.0).abs() < 1e-9 && (c.py - 150.0).abs() < 1e-9);
        let r = cam.project(&Vec3::new(1.0, 2.0, 0.0)).unwrap();
        assert!(r.px > 200.0 && r.py < 150.0);
        assert!(cam.project(&Vec3::new(0.0, 1.5, 7.0)).is_none());
    }

    #[test]
    fn fitted_viewport_keeps_the_aspect_and_the_box() {
        let v = fit_viewport([-1.0, 0.5], [1.0, 1.5], 0.1, 400, 300);
        assert!(((v[2] - v[0]) / (v[3] - v[1]) - 4.0 / 3.0).abs() < 1e-12);
        assert!(v[0] <= -1.1 && v[2] >= 1.1 && v[1] <= 0.4 && v[3] >= 1.6);
    }
}
