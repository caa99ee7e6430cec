//! The standard frame (DEVELOPERS.md, "Standard orientation") from the verified operations:
//! rows are the standard x, y, z axes in input coordinates, orthonormal with det +1.

use super::canonical::Family;
use super::{parallel, Ctx, RawOp};
use crate::error::{Error, Result};
use crate::ops::{cross, det, dot, mat_vec, normalize, Mat3, Vec3};
use nalgebra::Matrix3;

/// Frame with z along `z` and x along the part of `x_hint` perpendicular to z (any
/// perpendicular direction when there is no usable hint).
pub(super) fn axial_frame(z: &Vec3, x_hint: Option<Vec3>) -> Mat3 {
    let z = normalize(z).unwrap_or([0.0, 0.0, 1.0]);
    let perp = |h: &Vec3| {
        let t = dot(h, &z);
        normalize(&[h[0] - t * z[0], h[1] - t * z[1], h[2] - t * z[2]])
            .filter(|_| (1.0 - t * t).abs() > 1e-12)
    };
    let x = x_hint.and_then(|h| perp(&h)).unwrap_or_else(|| {
        // The coordinate axis least aligned with z.
        let k = (0..3)
            .min_by(|&i, &j| z[i].abs().total_cmp(&z[j].abs()))
            .unwrap_or(0);
        let mut e = [0.0; 3];
        e[k] = 1.0;
        perp(&e).unwrap_or([1.0, 0.0, 0.0])
    });
    let y = cross(&z, &x);
    [x, y, z]
}

/// Nearest orthonormal matrix (polar factor) to three nearly perpendicular axis rows, with
/// det +1 (the last row flipped if needed).
fn polar_frame(rows: [Vec3; 3]) -> Mat3 {
    let m = Matrix3::from_fn(|i, j| rows[i][j]);
    let svd = m.svd(true, true);
    let mut f = rows;
    if let (Some(u), Some(vt)) = (svd.u, svd.v_t) {
        let q = u * vt;
        f = [
            [q[(0, 0)], q[(0, 1)], q[(0, 2)]],
            [q[(1, 0)], q[(1, 1)], q[(1, 2)]],
            [q[(2, 0)], q[(2, 1)], q[(2, 2)]],
        ];
    }
    if det(&f) < 0.0 {
        f[2] = [-f[2][0], -f[2][1], -f[2][2]];
    }
    f
}

fn axes_where(
    raw: &[RawOp],
    proper: bool,
    order: usize,
    keep: impl Fn(&RawOp) -> bool,
) -> Vec<Vec3> {
    let mut out: Vec<Vec3> = Vec::new();
    for o in raw
        .iter()
        .filter(|o| o.proper == proper && o.order == order && keep(o))
    {
        if !out.iter().any(|u| parallel(u, &o.op.axis)) {
            out.push(o.op.axis);
        }
    }
    out
}

fn mirror_normals(raw: &[RawOp]) -> Vec<Vec3> {
    axes_where(raw, false, 2, |o| o.op.angle < 90.0)
}

/// Of the axes (or plane normals) perpendicular to z, the first and the one closest to
/// 180°/n away from it (for even n the two belong to different classes).
fn two_classes(axes: &[Vec3], n: usize) -> Option<(Vec3, Vec3)> {
    let u0 = *axes.first()?;
    let target = (180.0 / n as f64).to_radians().cos();
    let u1 = axes
        .iter()
        .min_by(|p, q| {
            (dot(p, &u0).abs() - target)
                .abs()
                .total_cmp(&(dot(q, &u0).abs() - target).abs())
        })
        .copied()?;
    Some((u0, u1))
}

fn missing(what: &str) -> Error {
    Error::GroupClosure {
        reason: format!("the operations found lack {what}"),
    }
}

/// The standard frame of `fam` from the raw operations and the atoms.
pub(super) fn standard_frame(ctx: &Ctx, fam: Family, raw: &[RawOp]) -> Result<Mat3> {
    let inertia_axes = *ctx.axes();
    let first = |v: Vec<Vec3>, what: &str| v.first().copied().ok_or_else(|| missing(what));
    let perpendicular_to = |z: Vec3| move |o: &RawOp| dot(&o.op.axis, &z).abs() < 0.1;
    match fam {
        Family::C1 | Family::Ci | Family::Kh(_) => {
            Ok(axial_frame(&inertia_axes[2], Some(inertia_axes[0])))
        }
        Family::Cs => {
            let z = first(mirror_normals(raw), "a mirror")?;
            let x = inertia_axes
                .iter()
                .copied()
                .find(|a| dot(a, &z).abs() < 0.7);
            Ok(axial_frame(&z, x))
        }
        Family::Cn(n) | Family::Cnh(n) => {
            let z = first(axes_where(raw, true, n, |_| true), "the principal axis")?;
            Ok(axial_frame(&z, atom_hint(ctx, &z)))
        }
        Family::S2n(m) => {
            let z = first(axes_where(raw, false, m, |_| true), "the S2n axis")?;
            Ok(axial_frame(&z, atom_hint(ctx, &z)))
        }
        Family::Cnv(2) => {
            let z = first(axes_where(raw, true, 2, |_| true), "the C2 axis")?;
            let normals = mirror_normals(raw);
            let (n0, n1) = match normals.as_slice() {
                [p, q, ..] => (*p, *q),
                _ => return Err(missing("two mirrors")),
            };
            let (c0, c1) = (ctx.count_in_plane(&n0), ctx.count_in_plane(&n1));
            let x = if c0 != c1 {
                if c0 > c1 {
                    n0
                } else {
                    n1
                }
            } else if ctx.moment(&n1) > ctx.moment(&n0) {
                n1
            } else {
                n0
            };
            Ok(axial_frame(&z, Some(x)))
        }
        Family::Cnv(n) => {
            let z = first(axes_where(raw, true, n, |_| true), "the principal axis")?;
            let normals = mirror_normals(raw);
            let (n0, n1) = two_classes(&normals, n).ok_or_else(|| missing("mirrors"))?;
            let normal = if n % 2 == 0 && ctx.count_in_plane(&n1) > ctx.count_in_plane(&n0) {
                n1
            } else {
                n0
            };
            // x lies in the σv plane: perpendicular to both z and the plane normal.
            Ok(axial_frame(&z, Some(cross(&normal, &z))))
        }
        Family::Dn(2) => {
            let mut c2 = axes_where(raw, true, 2, |_| true);
            if c2.len() != 3 {
                return Err(missing("three C2 axes"));
            }
            // z: most atoms on the axis, then smallest moment; x: the last.
            c2.sort_by(|p, q| {
                ctx.count_on_axis(q)
                    .cmp(&ctx.count_on_axis(p))
                    .then(ctx.moment(p).total_cmp(&ctx.moment(q)))
            });
            Ok(axial_frame(&c2[0], Some(c2[2])))
        }
        Family::Dnh(2) => {
            let mut c2 = axes_where(raw, true, 2, |_| true);
            if c2.len() != 3 {
                return Err(missing("three C2 axes"));
            }
            // x: most atoms in the perpendicular mirror, then largest moment.
            c2.sort_by(|p, q| {
                ctx.count_in_plane(q)
                    .cmp(&ctx.count_in_plane(p))
                    .then(ctx.moment(q).total_cmp(&ctx.moment(p)))
            });
            let x = c2[0];
            let (p, q) = (c2[1], c2[2]);
            let (cp, cq) = (ctx.count_on_axis(&p), ctx.count_on_axis(&q));
            let z = if cp != cq {
                if cp > cq {
                    p
                } else {
                    q
                }
            } else if ctx.moment(&q) < ctx.moment(&p) {
                q
            } else {
                p
            };
            Ok(axial_frame(&z, Some(x)))
        }
        Family::Dn(n) | Family::Dnh(n) => {
            let z = first(axes_where(raw, true, n, |_| true), "the principal axis")?;
            let c2 = axes_where(raw, true, 2, perpendicular_to(z));
            let (u0, u1) = two_classes(&c2, n).ok_or_else(|| missing("C2 axes"))?;
            let x = if n % 2 == 0 && ctx.count_on_axis(&u1) > ctx.count_on_axis(&u0) {
                u1
            } else {
                u0
            };
            Ok(axial_frame(&z, Some(x)))
        }
        Family::Dnd(n) => {
            let z = first(axes_where(raw, false, 2 * n, |_| true), "the S2n axis")?;
            let x = first(axes_where(raw, true, 2, perpendicular_to(z)), "C2' axes")?;
            Ok(axial_frame(&z, Some(x)))
        }
        Family::T | Family::Td | Family::Th => {
            let c2 = axes_where(raw, true, 2, |_| true);
            triple(&c2)
                .map(polar_frame)
                .ok_or_else(|| missing("three C2 axes"))
        }
        Family::O | Family::Oh => {
            let c4 = axes_where(raw, true, 4, |_| true);
            triple(&c4)
                .map(polar_frame)
                .ok_or_else(|| missing("three C4 axes"))
        }
        Family::I | Family::Ih => {
            let c2 = axes_where(raw, true, 2, |_| true);
            let mut f = triple(&c2)
                .map(polar_frame)
                .ok_or_else(|| missing("three C2 axes"))?;
            let c5 = first(axes_where(raw, true, 5, |_| true), "a C5 axis")?;
            // C5 along a cyclic permutation of (0, ±1, ±φ): otherwise swap x and y.
            let phi = (1.0 + 5f64.sqrt()) / 2.0;
            let s = (1.0 + phi * phi).sqrt();
            let w = mat_vec(&f, &c5);
            let aw = [w[0].abs(), w[1].abs(), w[2].abs()];
            let good = [[0.0, 1.0, phi], [1.0, phi, 0.0], [phi, 0.0, 1.0]]
                .iter()
                .any(|c| dot(&aw, c) / s > 0.99);
            if !good {
                f = [f[1], f[0], [-f[2][0], -f[2][1], -f[2][2]]];
            }
            Ok(f)
        }
        Family::Cinfv(_) | Family::Dinfh(_) => Err(missing("a finite principal axis")),
    }
}

/// Three mutually perpendicular axes from a list.
fn triple(axes: &[Vec3]) -> Option<[Vec3; 3]> {
    let c1 = *axes.first()?;
    let c2 = *axes.iter().find(|u| dot(u, &c1).abs() < 0.1)?;
    let c3 = *axes
        .iter()
        .find(|u| dot(u, &c1).abs() < 0.1 && dot(u, &c2).abs() < 0.1)?;
    Some([c1, c2, c3])
}

/// Direction of the first atom (input order) off the axis z, as a deterministic x.
fn atom_hint(ctx: &Ctx, z: &Vec3) -> Option<Vec3> {
    ctx.x.iter().find_map(|p| {
        let t = dot(p, z);
        let q = [p[0] - t * z[0], p[1] - t * z[1], p[2] - t * z[2]];
        if dot(&q, &q).sqrt() > ctx.tol {
            Some(q)
        } else {
            None
        }
    })
}
