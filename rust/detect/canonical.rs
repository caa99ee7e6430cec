//! The operations of every point group in the standard frame (DEVELOPERS.md, "Standard
//! orientation"): axial families by formula (any n), polyhedral groups by closure of their
//! generators. Each list starts with E and comes with the indices of a generating set.

use crate::ops::{mat_mul, max_abs_diff, rotation_matrix, Mat3, IDENTITY};
use std::f64::consts::PI;

/// The point groups the detector reports, with the n of the axial families.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Family {
    /// C1.
    C1,
    /// Cs (mirror normal along z).
    Cs,
    /// Ci.
    Ci,
    /// Cn, n ≥ 2.
    Cn(usize),
    /// Cnv, n ≥ 2.
    Cnv(usize),
    /// Cnh, n ≥ 2.
    Cnh(usize),
    /// S2n; the field is the order 2n (≥ 4).
    S2n(usize),
    /// Dn, n ≥ 2.
    Dn(usize),
    /// Dnh, n ≥ 2.
    Dnh(usize),
    /// Dnd, n ≥ 2.
    Dnd(usize),
    /// T.
    T,
    /// Td.
    Td,
    /// Th.
    Th,
    /// O.
    O,
    /// Oh.
    Oh,
    /// I.
    I,
    /// Ih.
    Ih,
    /// C∞v, reported through C_Mv.
    Cinfv(usize),
    /// D∞h, reported through D_Md.
    Dinfh(usize),
    /// A single atom.
    Kh,
}

impl Family {
    /// The Schoenflies name as INTERFACE.md spells it.
    pub fn name(&self) -> String {
        match *self {
            Family::C1 => "C1".into(),
            Family::Cs => "Cs".into(),
            Family::Ci => "Ci".into(),
            Family::Cn(n) => format!("C{n}"),
            Family::Cnv(n) => format!("C{n}v"),
            Family::Cnh(n) => format!("C{n}h"),
            Family::S2n(m) => format!("S{m}"),
            Family::Dn(n) => format!("D{n}"),
            Family::Dnh(n) => format!("D{n}h"),
            Family::Dnd(n) => format!("D{n}d"),
            Family::T => "T".into(),
            Family::Td => "Td".into(),
            Family::Th => "Th".into(),
            Family::O => "O".into(),
            Family::Oh => "Oh".into(),
            Family::I => "I".into(),
            Family::Ih => "Ih".into(),
            Family::Cinfv(_) => "C∞v".into(),
            Family::Dinfh(_) => "D∞h".into(),
            Family::Kh => "K_h".into(),
        }
    }
}

fn rz(theta: f64) -> Mat3 {
    let (s, c) = theta.sin_cos();
    [[c, -s, 0.0], [s, c, 0.0], [0.0, 0.0, 1.0]]
}

const SIGMA_H: Mat3 = [[1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, -1.0]];
const INVERSION: Mat3 = [[-1.0, 0.0, 0.0], [0.0, -1.0, 0.0], [0.0, 0.0, -1.0]];

/// C2 about the horizontal axis at azimuth φ.
fn c2_horizontal(phi: f64) -> Mat3 {
    let (s, c) = phi.sin_cos();
    // 2uuᵀ − 1 with u = (c, s, 0).
    [
        [2.0 * c * c - 1.0, 2.0 * c * s, 0.0],
        [2.0 * c * s, 2.0 * s * s - 1.0, 0.0],
        [0.0, 0.0, -1.0],
    ]
}

/// Mirror whose plane contains z and the horizontal direction at azimuth φ.
fn sigma_vertical(phi: f64) -> Mat3 {
    let (s, c) = phi.sin_cos();
    // 1 − 2nnᵀ with n = (−s, c, 0).
    [
        [1.0 - 2.0 * s * s, 2.0 * s * c, 0.0],
        [2.0 * s * c, 1.0 - 2.0 * c * c, 0.0],
        [0.0, 0.0, 1.0],
    ]
}

fn rotations_z(n: usize) -> Vec<Mat3> {
    (0..n).map(|k| rz(2.0 * PI * k as f64 / n as f64)).collect()
}

fn dihedral(n: usize) -> Vec<Mat3> {
    let mut v = rotations_z(n);
    v.extend((0..n).map(|j| c2_horizontal(PI * j as f64 / n as f64)));
    v
}

/// Closure of `gens` under multiplication (breadth first: every element times every
/// generator), E first and the generators next.
fn close(gens: &[Mat3]) -> (Vec<Mat3>, Vec<usize>) {
    let mut all = vec![IDENTITY];
    let mut gen_idx = Vec::new();
    for g in gens {
        match all.iter().position(|m| max_abs_diff(m, g) < 1e-8) {
            Some(i) => gen_idx.push(i),
            None => {
                gen_idx.push(all.len());
                all.push(*g);
            }
        }
    }
    let mut k = 0;
    while k < all.len() && all.len() <= 240 {
        let x = all[k];
        for g in gens {
            let p = mat_mul(&x, g);
            if !all.iter().any(|m| max_abs_diff(m, &p) < 1e-8) {
                all.push(p);
            }
        }
        k += 1;
    }
    (all, gen_idx)
}

/// The operations of `family` in the standard frame (E first) and the indices of a
/// generating set (empty for C1 and K_h).
pub fn standard_operations(family: Family) -> (Vec<Mat3>, Vec<usize>) {
    let cyc: Mat3 = [[0.0, 0.0, 1.0], [1.0, 0.0, 0.0], [0.0, 1.0, 0.0]]; // C3 about (1,1,1)
    let c2z = rz(PI);
    let phi = (1.0 + 5f64.sqrt()) / 2.0;
    let s = (1.0 + phi * phi).sqrt();
    let c5 = rotation_matrix(&[0.0, 1.0 / s, phi / s], 2.0 * PI / 5.0);
    match family {
        Family::C1 | Family::Kh => (vec![IDENTITY], vec![]),
        Family::Cs => (vec![IDENTITY, SIGMA_H], vec![1]),
        Family::Ci => (vec![IDENTITY, INVERSION], vec![1]),
        Family::Cn(n) => (rotations_z(n), if n > 1 { vec![1] } else { vec![] }),
        Family::Cnv(n) | Family::Cinfv(n) => {
            let mut v = rotations_z(n);
            v.extend((0..n).map(|j| sigma_vertical(PI * j as f64 / n as f64)));
            (v, vec![1, n])
        }
        Family::Cnh(n) => {
            let mut v = rotations_z(n);
            v.extend(rotations_z(n).iter().map(|r| mat_mul(&SIGMA_H, r)));
            (v, vec![1, n])
        }
        Family::S2n(m) => {
            let v = (0..m)
                .map(|k| {
                    let r = rz(2.0 * PI * k as f64 / m as f64);
                    if k % 2 == 1 {
                        mat_mul(&SIGMA_H, &r)
                    } else {
                        r
                    }
                })
                .collect();
            (v, vec![1])
        }
        Family::Dn(n) => (dihedral(n), vec![1, n]),
        Family::Dnh(n) => {
            let mut v = dihedral(n);
            let reflected: Vec<Mat3> = v.iter().map(|r| mat_mul(&SIGMA_H, r)).collect();
            v.extend(reflected);
            (v, vec![1, n, 2 * n])
        }
        Family::Dnd(n) | Family::Dinfh(n) => {
            let mut v = dihedral(n);
            v.extend((0..n).map(|k| mat_mul(&SIGMA_H, &rz(PI * (2 * k + 1) as f64 / n as f64))));
            v.extend((0..n).map(|j| sigma_vertical(PI * (j as f64 + 0.5) / n as f64)));
            (v, vec![1, n, 3 * n])
        }
        Family::T => close(&[cyc, c2z]),
        Family::Td => close(&[cyc, mat_mul(&SIGMA_H, &rz(PI / 2.0))]),
        Family::Th => close(&[cyc, c2z, INVERSION]),
        Family::O => close(&[rz(PI / 2.0), cyc]),
        Family::Oh => close(&[rz(PI / 2.0), cyc, INVERSION]),
        // Elements of orders 5 and 3 generate I: A5 has no proper subgroup of order 15·k.
        Family::I => close(&[c5, cyc]),
        Family::Ih => close(&[c5, cyc, INVERSION]),
    }
}
