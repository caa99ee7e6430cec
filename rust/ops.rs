//! Point operations: matrix, proper/improper, angle, axis, composition, order.
//!
//! Convention (DEVELOPERS.md, "Operations"): every operation is R = C(θ) (proper) or
//! R = σh·C(θ) (improper) about a unit axis, θ in [0°, 180°]. E = proper 0, σ = improper 0
//! (axis = plane normal), i = improper 180 (axis undefined, reported as z),
//! S_n^k = improper 360k/n folded into [0, 180]. Where the sign of the axis carries no
//! meaning (θ = 0° or 180°) it is fixed so that its first non-negligible component is
//! positive.

use nalgebra::Matrix3;

/// A 3-vector (Å or unitless).
pub type Vec3 = [f64; 3];
/// A 3×3 matrix, row-major: `m[row][col]`.
pub type Mat3 = [[f64; 3]; 3];

/// Below this angle (degrees) an axis is taken as undefined or its sign as free.
const ANGLE_EPS_DEG: f64 = 1e-7;

/// The 3×3 identity matrix.
pub const IDENTITY: Mat3 = [[1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]];

/// Dot product.
pub fn dot(a: &Vec3, b: &Vec3) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}

/// Cross product a × b.
pub fn cross(a: &Vec3, b: &Vec3) -> Vec3 {
    [
        a[1] * b[2] - a[2] * b[1],
        a[2] * b[0] - a[0] * b[2],
        a[0] * b[1] - a[1] * b[0],
    ]
}

/// Euclidean norm.
pub fn norm(a: &Vec3) -> f64 {
    dot(a, a).sqrt()
}

/// `a / |a|`, or `None` when |a| is zero or not finite.
pub fn normalize(a: &Vec3) -> Option<Vec3> {
    let n = norm(a);
    if n > 0.0 && n.is_finite() {
        Some([a[0] / n, a[1] / n, a[2] / n])
    } else {
        None
    }
}

/// Matrix product a·b (apply b, then a).
pub fn mat_mul(a: &Mat3, b: &Mat3) -> Mat3 {
    let mut c = [[0.0; 3]; 3];
    for (i, row) in c.iter_mut().enumerate() {
        for (j, v) in row.iter_mut().enumerate() {
            *v = a[i][0] * b[0][j] + a[i][1] * b[1][j] + a[i][2] * b[2][j];
        }
    }
    c
}

/// Matrix times vector.
pub fn mat_vec(m: &Mat3, v: &Vec3) -> Vec3 {
    [dot(&m[0], v), dot(&m[1], v), dot(&m[2], v)]
}

/// Transpose.
pub fn transpose(m: &Mat3) -> Mat3 {
    [
        [m[0][0], m[1][0], m[2][0]],
        [m[0][1], m[1][1], m[2][1]],
        [m[0][2], m[1][2], m[2][2]],
    ]
}

/// Determinant.
pub fn det(m: &Mat3) -> f64 {
    dot(&m[0], &cross(&m[1], &m[2]))
}

/// Largest absolute entry of a − b.
pub fn max_abs_diff(a: &Mat3, b: &Mat3) -> f64 {
    let mut d = 0.0_f64;
    for i in 0..3 {
        for j in 0..3 {
            d = d.max((a[i][j] - b[i][j]).abs());
        }
    }
    d
}

fn scale(m: &Mat3, s: f64) -> Mat3 {
    let mut r = *m;
    for row in r.iter_mut() {
        for v in row.iter_mut() {
            *v *= s;
        }
    }
    r
}

/// Rotation matrix by `angle_rad` about the unit vector `u` (Rodrigues).
pub(crate) fn rotation_matrix(u: &Vec3, angle_rad: f64) -> Mat3 {
    let (s, c) = angle_rad.sin_cos();
    let t = 1.0 - c;
    [
        [
            c + t * u[0] * u[0],
            t * u[0] * u[1] - s * u[2],
            t * u[0] * u[2] + s * u[1],
        ],
        [
            t * u[1] * u[0] + s * u[2],
            c + t * u[1] * u[1],
            t * u[1] * u[2] - s * u[0],
        ],
        [
            t * u[2] * u[0] - s * u[1],
            t * u[2] * u[1] + s * u[0],
            c + t * u[2] * u[2],
        ],
    ]
}

/// Reflection matrix through the plane with unit normal `u`: 1 − 2uuᵀ.
fn reflection_matrix(u: &Vec3) -> Mat3 {
    let mut m = IDENTITY;
    for (i, row) in m.iter_mut().enumerate() {
        for (j, v) in row.iter_mut().enumerate() {
            *v -= 2.0 * u[i] * u[j];
        }
    }
    m
}

/// Flip `u` so that its first component with magnitude above 1e-6 is positive.
fn canonical_sign(u: Vec3) -> Vec3 {
    for &c in &u {
        if c.abs() > 1e-6 {
            return if c < 0.0 { [-u[0], -u[1], -u[2]] } else { u };
        }
    }
    u
}

/// Best orthogonal matrix R (least squares) with R·xᵢ ≈ yᵢ, from the covariance
/// `h = Σ xᵢ yᵢᵀ` (Kabsch): proper (det +1) when `proper`, improper (det −1) otherwise.
pub fn fit_orthogonal(h: &Mat3, proper: bool) -> Mat3 {
    // An improper R is −Q with Q proper fitted to (x, −y).
    let hh = if proper { *h } else { scale(h, -1.0) };
    let m = Matrix3::from_fn(|i, j| hh[i][j]);
    let svd = m.svd(true, true);
    let (Some(u), Some(vt)) = (svd.u, svd.v_t) else {
        return if proper {
            IDENTITY
        } else {
            scale(&IDENTITY, -1.0)
        };
    };
    let v = vt.transpose();
    let d = (v * u.transpose()).determinant();
    let mut dm = Matrix3::identity();
    if d < 0.0 {
        dm[(2, 2)] = -1.0;
    }
    let r = v * dm * u.transpose();
    let q: Mat3 = [
        [r[(0, 0)], r[(0, 1)], r[(0, 2)]],
        [r[(1, 0)], r[(1, 1)], r[(1, 2)]],
        [r[(2, 0)], r[(2, 1)], r[(2, 2)]],
    ];
    if proper {
        q
    } else {
        scale(&q, -1.0)
    }
}

/// A point operation with its classification (see the module doc for the convention).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PointOp {
    /// The 3×3 orthogonal matrix acting on column vectors (positions relative to the centre).
    pub matrix: Mat3,
    /// True for C(θ), false for σh·C(θ).
    pub proper: bool,
    /// θ in degrees, in [0, 180].
    pub angle: f64,
    /// Unit axis (plane normal for σ; z for E and i).
    pub axis: Vec3,
}

impl PointOp {
    /// The identity E (proper, 0°, axis z).
    pub fn identity() -> PointOp {
        PointOp {
            matrix: IDENTITY,
            proper: true,
            angle: 0.0,
            axis: [0.0, 0.0, 1.0],
        }
    }

    /// The inversion i = σh·C(180°) (improper, 180°, axis reported as z).
    pub fn inversion() -> PointOp {
        PointOp {
            matrix: scale(&IDENTITY, -1.0),
            proper: false,
            angle: 180.0,
            axis: [0.0, 0.0, 1.0],
        }
    }

    /// Proper rotation C(θ) by `angle_deg` degrees (right-handed) about `axis` (any length;
    /// a zero or non-finite axis gives z).
    pub fn rotation(axis: Vec3, angle_deg: f64) -> PointOp {
        let u = normalize(&axis).unwrap_or([0.0, 0.0, 1.0]);
        PointOp::from_matrix(rotation_matrix(&u, angle_deg.to_radians()))
    }

    /// Improper rotation σh·C(θ): rotation by `angle_deg` about `axis`, then reflection
    /// through the plane perpendicular to `axis`.
    pub fn improper(axis: Vec3, angle_deg: f64) -> PointOp {
        let u = normalize(&axis).unwrap_or([0.0, 0.0, 1.0]);
        let m = mat_mul(
            &reflection_matrix(&u),
            &rotation_matrix(&u, angle_deg.to_radians()),
        );
        PointOp::from_matrix(m)
    }

    /// Reflection σ through the plane with normal `normal` (improper, 0°).
    pub fn reflection(normal: Vec3) -> PointOp {
        let u = normalize(&normal).unwrap_or([0.0, 0.0, 1.0]);
        PointOp::from_matrix(reflection_matrix(&u))
    }

    /// Classify an orthogonal matrix (it may carry small noise): the sign of the determinant
    /// gives proper/improper; a proper R has cos θ = (tr R − 1)/2 and its axis from the
    /// antisymmetric part, or, near 180°, from the largest column of (R + Rᵀ)/2 − cos θ·1;
    /// an improper R = −Q is classified through the proper Q = C(θ', u) as
    /// σh·C(180° − θ') about −u.
    pub fn from_matrix(m: Mat3) -> PointOp {
        let proper = det(&m) >= 0.0;
        let r = if proper { m } else { scale(&m, -1.0) };
        let (theta, u) = classify_proper(&r);
        let (mut angle, mut axis) = if proper {
            (theta, u)
        } else {
            (180.0 - theta, [-u[0], -u[1], -u[2]])
        };
        angle = angle.clamp(0.0, 180.0);
        if !proper && angle > 180.0 - ANGLE_EPS_DEG {
            angle = 180.0;
            axis = [0.0, 0.0, 1.0];
        } else if proper && angle < ANGLE_EPS_DEG {
            angle = 0.0;
            axis = [0.0, 0.0, 1.0];
        } else if !(ANGLE_EPS_DEG..=180.0 - ANGLE_EPS_DEG).contains(&angle) {
            axis = canonical_sign(axis);
        }
        PointOp {
            matrix: m,
            proper,
            angle,
            axis,
        }
    }

    /// a·b: the operation "apply `b`, then `a`".
    pub fn compose(a: &PointOp, b: &PointOp) -> PointOp {
        PointOp::from_matrix(mat_mul(&a.matrix, &b.matrix))
    }

    /// The inverse operation (the transpose of the matrix).
    pub fn inverse(&self) -> PointOp {
        PointOp::from_matrix(transpose(&self.matrix))
    }

    /// Apply the operation to a vector.
    pub fn apply(&self, v: &Vec3) -> Vec3 {
        mat_vec(&self.matrix, v)
    }

    /// Order: the smallest k ≥ 1 with Rᵏ = E, searched up to 100 000 with an angular tolerance
    /// of 1e-6° per power; `None` when no such k exists (irrational angle or noise).
    pub fn order(&self) -> Option<usize> {
        self.order_within(100_000, 1e-6)
    }

    /// Order with an explicit search bound and angular tolerance (degrees, per power):
    /// C(θ)ᵏ = C(kθ) and (σh·C(θ))ᵏ = σhᵏ·C(kθ), so Rᵏ = E when kθ ≡ 0 (mod 360°) and, for an
    /// improper R, k is even.
    pub fn order_within(&self, max_order: usize, angle_tol_deg: f64) -> Option<usize> {
        (1..=max_order).find(|&k| {
            let t = k as f64 * self.angle / 360.0;
            let off = (t - t.round()).abs() * 360.0;
            off <= angle_tol_deg * k as f64 && (self.proper || k % 2 == 0)
        })
    }

    /// True when every matrix entry differs by at most `tol`.
    pub fn approx_eq(&self, other: &PointOp, tol: f64) -> bool {
        max_abs_diff(&self.matrix, &other.matrix) <= tol
    }
}

/// (θ in degrees, unit axis) of a proper rotation matrix.
fn classify_proper(r: &Mat3) -> (f64, Vec3) {
    let tr = r[0][0] + r[1][1] + r[2][2];
    let c = ((tr - 1.0) / 2.0).clamp(-1.0, 1.0);
    let w = [r[2][1] - r[1][2], r[0][2] - r[2][0], r[1][0] - r[0][1]];
    let wn = norm(&w);
    let theta = (wn / 2.0).atan2(c);
    let deg = theta.to_degrees();
    if deg < ANGLE_EPS_DEG {
        return (0.0, [0.0, 0.0, 1.0]);
    }
    if deg < 120.0 {
        if let Some(u) = normalize(&w) {
            return (deg, u);
        }
    }
    // (R + Rᵀ)/2 − cos θ·1 = (1 − cos θ) u uᵀ: take its largest column.
    let mut best = 0;
    let mut b = [[0.0; 3]; 3];
    for i in 0..3 {
        for j in 0..3 {
            b[i][j] = 0.5 * (r[i][j] + r[j][i]) - if i == j { c } else { 0.0 };
        }
        if b[i][i] > b[best][best] {
            best = i;
        }
    }
    let col = [b[0][best], b[1][best], b[2][best]];
    let mut u = normalize(&col).unwrap_or([0.0, 0.0, 1.0]);
    if wn > 1e-12 && dot(&u, &w) < 0.0 {
        u = [-u[0], -u[1], -u[2]];
    }
    (deg, u)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() < 1e-9
    }

    fn vclose(a: &Vec3, b: &Vec3) -> bool {
        (0..3).all(|k| (a[k] - b[k]).abs() < 1e-9)
    }

    #[test]
    fn test_identity_and_inversion_follow_the_convention() {
        let e = PointOp::identity();
        assert!(e.proper && e.angle == 0.0 && e.axis == [0.0, 0.0, 1.0]);
        let i = PointOp::inversion();
        assert!(!i.proper && i.angle == 180.0 && i.axis == [0.0, 0.0, 1.0]);
        assert_eq!(PointOp::from_matrix(i.matrix), i);
        assert_eq!(PointOp::from_matrix(IDENTITY), e);
    }

    #[test]
    fn test_rotation_about_z_by_90_degrees() {
        let c4 = PointOp::rotation([0.0, 0.0, 2.0], 90.0);
        assert!(c4.proper && close(c4.angle, 90.0) && vclose(&c4.axis, &[0.0, 0.0, 1.0]));
        // Right-handed: x goes to y.
        assert!(vclose(&c4.apply(&[1.0, 0.0, 0.0]), &[0.0, 1.0, 0.0]));
        assert_eq!(c4.order(), Some(4));
    }

    #[test]
    fn test_negative_angle_flips_the_axis() {
        let r = PointOp::rotation([0.0, 0.0, 1.0], -90.0);
        assert!(close(r.angle, 90.0) && vclose(&r.axis, &[0.0, 0.0, -1.0]));
        let r = PointOp::rotation([1.0, 0.0, 0.0], 270.0);
        assert!(close(r.angle, 90.0) && vclose(&r.axis, &[-1.0, 0.0, 0.0]));
    }

    #[test]
    fn test_c2_axis_is_recovered_with_canonical_sign() {
        let u = [-1.0, 2.0, -2.0];
        let c2 = PointOp::rotation(u, 180.0);
        let expect = [1.0 / 3.0, -2.0 / 3.0, 2.0 / 3.0];
        assert!(c2.proper && close(c2.angle, 180.0) && vclose(&c2.axis, &expect));
        assert_eq!(c2.order(), Some(2));
    }

    #[test]
    fn test_reflection_is_improper_zero_with_normal_axis() {
        let s = PointOp::reflection([0.0, -3.0, 0.0]);
        assert!(!s.proper && s.angle == 0.0 && vclose(&s.axis, &[0.0, 1.0, 0.0]));
        assert!(vclose(&s.apply(&[1.0, 2.0, 3.0]), &[1.0, -2.0, 3.0]));
        assert_eq!(s.order(), Some(2));
    }

    #[test]
    fn test_improper_rotations_s4_s6_s8() {
        // common practice: S_n^k = improper 360k/n folded into [0, 180].
        for (n, k, expect_angle, expect_order) in [
            (4, 1, 90.0, 4),
            (4, 3, 90.0, 4),
            (6, 1, 60.0, 6),
            (6, 5, 60.0, 6),
            (8, 3, 135.0, 8),
            (3, 1, 120.0, 6),
            (2, 1, 180.0, 2),
        ] {
            let theta = 360.0 * k as f64 / n as f64;
            let s = PointOp::improper([0.3, -0.2, 0.9], theta);
            assert!(!s.proper, "S{n}^{k}");
            assert!(close(s.angle, expect_angle), "S{n}^{k}: {}", s.angle);
            assert_eq!(s.order(), Some(expect_order), "S{n}^{k}");
        }
        // S2 is the inversion.
        let i = PointOp::improper([0.3, -0.2, 0.9], 180.0);
        assert!(i.approx_eq(&PointOp::inversion(), 1e-12));
        assert_eq!(i.axis, [0.0, 0.0, 1.0]);
    }

    #[test]
    fn test_improper_axis_sign_matches_construction() {
        let s = PointOp::improper([0.0, 0.0, 1.0], 90.0);
        assert!(vclose(&s.axis, &[0.0, 0.0, 1.0]));
        // σh·C4 sends x to y (rotation) and keeps z-plane points in place.
        assert!(vclose(&s.apply(&[1.0, 0.0, 0.0]), &[0.0, 1.0, 0.0]));
        assert!(vclose(&s.apply(&[0.0, 0.0, 1.0]), &[0.0, 0.0, -1.0]));
    }

    #[test]
    fn test_from_matrix_round_trips_many_operations() {
        let axes = [
            [1.0, 0.0, 0.0],
            [0.2, 0.5, -0.84],
            [-0.6, 0.0, 0.8],
            [0.577, 0.577, 0.577],
        ];
        for a in axes {
            for deg in [1.0, 30.0, 72.0, 119.9, 120.0, 144.0, 179.999, 180.0] {
                for proper in [true, false] {
                    let op = if proper {
                        PointOp::rotation(a, deg)
                    } else {
                        PointOp::improper(a, deg)
                    };
                    let again = if proper {
                        PointOp::rotation(op.axis, op.angle)
                    } else {
                        PointOp::improper(op.axis, op.angle)
                    };
                    assert!(op.approx_eq(&again, 1e-9), "{a:?} {deg} {proper}");
                    assert!((norm(&op.axis) - 1.0).abs() < 1e-12);
                    assert!((0.0..=180.0).contains(&op.angle));
                }
            }
        }
    }

    #[test]
    fn test_compose_applies_right_operand_first() {
        let c4 = PointOp::rotation([0.0, 0.0, 1.0], 90.0);
        let sx = PointOp::reflection([1.0, 0.0, 0.0]);
        let p = PointOp::compose(&c4, &sx);
        let v = [1.0, 0.0, 0.0];
        assert!(vclose(&p.apply(&v), &c4.apply(&sx.apply(&v))));
        // σ then C4 is a reflection (improper 0).
        assert!(!p.proper && close(p.angle, 0.0));
        // C4 · C4 = C2, C2 · C2 = E.
        let c2 = PointOp::compose(&c4, &c4);
        assert!(c2.proper && close(c2.angle, 180.0));
        assert!(PointOp::compose(&c2, &c2).approx_eq(&PointOp::identity(), 1e-12));
        assert!(PointOp::compose(&c4, &c4.inverse()).approx_eq(&PointOp::identity(), 1e-12));
    }

    #[test]
    fn test_order_of_large_n_and_irrational_angles() {
        for n in [5usize, 7, 12, 24, 100] {
            let c = PointOp::rotation([0.0, 1.0, 0.0], 360.0 / n as f64);
            assert_eq!(c.order(), Some(n));
            let c3 = PointOp::rotation([0.0, 1.0, 0.0], 3.0 * 360.0 / n as f64);
            let g = if n % 3 == 0 { n / 3 } else { n };
            assert_eq!(c3.order(), Some(g));
        }
        let odd = PointOp::rotation([0.0, 1.0, 0.0], 360.0 / 2f64.sqrt());
        assert_eq!(odd.order_within(1000, 1e-9), None);
    }

    #[test]
    fn test_from_matrix_tolerates_small_noise() {
        let c3 = PointOp::rotation([1.0, 1.0, 1.0], 120.0);
        let mut m = c3.matrix;
        m[0][1] += 1e-7;
        m[2][0] -= 1e-7;
        let n = PointOp::from_matrix(m);
        assert!(n.proper && (n.angle - 120.0).abs() < 1e-4);
        let u = 1.0 / 3f64.sqrt();
        assert!((0..3).all(|k| (n.axis[k] - u).abs() < 1e-5));
        // A noisy C2 near 180° still gets a unit axis.
        let mut m = PointOp::rotation([0.0, 0.6, 0.8], 180.0).matrix;
        m[0][0] += 1e-8;
        let n = PointOp::from_matrix(m);
        assert!((norm(&n.axis) - 1.0).abs() < 1e-12 && n.axis[1] > 0.59);
    }

    #[test]
    fn test_non_finite_axis_falls_back_to_z() {
        let r = PointOp::rotation([f64::NAN, 0.0, 0.0], 90.0);
        assert!(vclose(&r.axis, &[0.0, 0.0, 1.0]));
        let r = PointOp::reflection([0.0, 0.0, 0.0]);
        assert!(vclose(&r.axis, &[0.0, 0.0, 1.0]));
    }

    #[test]
    fn test_fit_orthogonal_recovers_rotation_and_reflection() {
        let truth = PointOp::rotation([0.3, -0.4, 0.5], 71.0);
        let pts = [
            [1.0, 0.0, 0.2],
            [0.0, 2.0, -1.0],
            [0.5, 0.5, 3.0],
            [-1.0, 0.1, 0.0],
        ];
        let mut h = [[0.0; 3]; 3];
        for p in &pts {
            let q = truth.apply(p);
            for i in 0..3 {
                for j in 0..3 {
                    h[i][j] += p[i] * q[j];
                }
            }
        }
        let r = fit_orthogonal(&h, true);
        assert!(max_abs_diff(&r, &truth.matrix) < 1e-9);
        let sigma = PointOp::reflection([1.0, 1.0, 0.0]);
        let mut h = [[0.0; 3]; 3];
        for p in &pts {
            let q = sigma.apply(p);
            for i in 0..3 {
                for j in 0..3 {
                    h[i][j] += p[i] * q[j];
                }
            }
        }
        let r = fit_orthogonal(&h, false);
        assert!(max_abs_diff(&r, &sigma.matrix) < 1e-9);
        assert!(det(&r) < 0.0);
    }
}
