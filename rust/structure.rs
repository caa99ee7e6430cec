//! Elements (symbols, atomic weights, covalent radii), input validation, centring and inertia.
//!
//! Atomic weights: IUPAC 2021 standard atomic weights (conventional/abridged values, written
//! from memory of the published table). For elements without a stable isotope (Tc, Pm and
//! Z ≥ 84 except Th, Pa, U) the weight is the mass number of the longest-lived isotope, as the
//! IUPAC table prints it in brackets.
//!
//! Covalent radii: Cordero et al., "Covalent radii revisited", Dalton Trans. 2008, 2832
//! (written from memory of its table 2; C is the sp3 value, Mn, Fe and Co the low-spin
//! values). That table stops at Cm (Z = 96); for Z = 97..=118 we use 1.5 Å.
//!
//! Isotopes: the nuclide masses of ¹H, ²H (symbol D) and ³H (symbol T) are those of the
//! Atomic Mass Evaluation AME2020 (Wang et al., Chinese Physics C 45, 030003, 2021; written
//! from memory). Atoms are told apart by *species* (see [`Species`]): element and mass, so
//! that atoms of one element with different masses never map onto each other.

use crate::error::{Error, Result};
use nalgebra::{Matrix3, SymmetricEigen};

/// Largest coordinate magnitude accepted, Å: beyond it tolerant comparisons of 0.01 Å lose
/// meaning in double precision arithmetic after rotations.
pub const MAX_COORDINATE: f64 = 1e6;

/// Covalent radius used where Cordero et al. (2008) give none, Å.
pub const DEFAULT_COVALENT_RADIUS: f64 = 1.5;

/// (symbol, standard atomic weight in u, covalent radius in Å) for Z = 1..=118.
const ELEMENTS: [(&str, f64, f64); 118] = [
    ("H", 1.008, 0.31),
    ("He", 4.0026, 0.28),
    ("Li", 6.94, 1.28),
    ("Be", 9.0122, 0.96),
    ("B", 10.81, 0.84),
    ("C", 12.011, 0.76),
    ("N", 14.007, 0.71),
    ("O", 15.999, 0.66),
    ("F", 18.998, 0.57),
    ("Ne", 20.180, 0.58),
    ("Na", 22.990, 1.66),
    ("Mg", 24.305, 1.41),
    ("Al", 26.982, 1.21),
    ("Si", 28.085, 1.11),
    ("P", 30.974, 1.07),
    ("S", 32.06, 1.05),
    ("Cl", 35.45, 1.02),
    ("Ar", 39.95, 1.06),
    ("K", 39.098, 2.03),
    ("Ca", 40.078, 1.76),
    ("Sc", 44.956, 1.70),
    ("Ti", 47.867, 1.60),
    ("V", 50.942, 1.53),
    ("Cr", 51.996, 1.39),
    ("Mn", 54.938, 1.39),
    ("Fe", 55.845, 1.32),
    ("Co", 58.933, 1.26),
    ("Ni", 58.693, 1.24),
    ("Cu", 63.546, 1.32),
    ("Zn", 65.38, 1.22),
    ("Ga", 69.723, 1.22),
    ("Ge", 72.630, 1.20),
    ("As", 74.922, 1.19),
    ("Se", 78.971, 1.20),
    ("Br", 79.904, 1.20),
    ("Kr", 83.798, 1.16),
    ("Rb", 85.468, 2.20),
    ("Sr", 87.62, 1.95),
    ("Y", 88.906, 1.90),
    ("Zr", 91.222, 1.75),
    ("Nb", 92.906, 1.64),
    ("Mo", 95.95, 1.54),
    ("Tc", 97.0, 1.47),
    ("Ru", 101.07, 1.46),
    ("Rh", 102.91, 1.42),
    ("Pd", 106.42, 1.39),
    ("Ag", 107.87, 1.45),
    ("Cd", 112.41, 1.44),
    ("In", 114.82, 1.42),
    ("Sn", 118.71, 1.39),
    ("Sb", 121.76, 1.39),
    ("Te", 127.60, 1.38),
    ("I", 126.90, 1.39),
    ("Xe", 131.29, 1.40),
    ("Cs", 132.91, 2.44),
    ("Ba", 137.33, 2.15),
    ("La", 138.91, 2.07),
    ("Ce", 140.12, 2.04),
    ("Pr", 140.91, 2.03),
    ("Nd", 144.24, 2.01),
    ("Pm", 145.0, 1.99),
    ("Sm", 150.36, 1.98),
    ("Eu", 151.96, 1.98),
    ("Gd", 157.25, 1.96),
    ("Tb", 158.93, 1.94),
    ("Dy", 162.50, 1.92),
    ("Ho", 164.93, 1.92),
    ("Er", 167.26, 1.89),
    ("Tm", 168.93, 1.90),
    ("Yb", 173.05, 1.87),
    ("Lu", 174.97, 1.87),
    ("Hf", 178.49, 1.75),
    ("Ta", 180.95, 1.70),
    ("W", 183.84, 1.62),
    ("Re", 186.21, 1.51),
    ("Os", 190.23, 1.44),
    ("Ir", 192.22, 1.41),
    ("Pt", 195.08, 1.36),
    ("Au", 196.97, 1.36),
    ("Hg", 200.59, 1.32),
    ("Tl", 204.38, 1.45),
    ("Pb", 207.2, 1.46),
    ("Bi", 208.98, 1.48),
    ("Po", 209.0, 1.40),
    ("At", 210.0, 1.50),
    ("Rn", 222.0, 1.50),
    ("Fr", 223.0, 2.60),
    ("Ra", 226.0, 2.21),
    ("Ac", 227.0, 2.15),
    ("Th", 232.04, 2.06),
    ("Pa", 231.04, 2.00),
    ("U", 238.03, 1.96),
    ("Np", 237.0, 1.90),
    ("Pu", 244.0, 1.87),
    ("Am", 243.0, 1.80),
    ("Cm", 247.0, 1.69),
    // From here on Cordero et al. give no radius: DEFAULT_COVALENT_RADIUS.
    ("Bk", 247.0, DEFAULT_COVALENT_RADIUS),
    ("Cf", 251.0, DEFAULT_COVALENT_RADIUS),
    ("Es", 252.0, DEFAULT_COVALENT_RADIUS),
    ("Fm", 257.0, DEFAULT_COVALENT_RADIUS),
    ("Md", 258.0, DEFAULT_COVALENT_RADIUS),
    ("No", 259.0, DEFAULT_COVALENT_RADIUS),
    ("Lr", 266.0, DEFAULT_COVALENT_RADIUS),
    ("Rf", 267.0, DEFAULT_COVALENT_RADIUS),
    ("Db", 268.0, DEFAULT_COVALENT_RADIUS),
    ("Sg", 269.0, DEFAULT_COVALENT_RADIUS),
    ("Bh", 270.0, DEFAULT_COVALENT_RADIUS),
    ("Hs", 269.0, DEFAULT_COVALENT_RADIUS),
    ("Mt", 278.0, DEFAULT_COVALENT_RADIUS),
    ("Ds", 281.0, DEFAULT_COVALENT_RADIUS),
    ("Rg", 282.0, DEFAULT_COVALENT_RADIUS),
    ("Cn", 285.0, DEFAULT_COVALENT_RADIUS),
    ("Nh", 286.0, DEFAULT_COVALENT_RADIUS),
    ("Fl", 289.0, DEFAULT_COVALENT_RADIUS),
    ("Mc", 290.0, DEFAULT_COVALENT_RADIUS),
    ("Lv", 293.0, DEFAULT_COVALENT_RADIUS),
    ("Ts", 294.0, DEFAULT_COVALENT_RADIUS),
    ("Og", 294.0, DEFAULT_COVALENT_RADIUS),
];

/// Mass of ¹H (protium), u (AME2020).
pub const PROTIUM_MASS: f64 = 1.007_825_032;
/// Mass of ²H (deuterium, symbol D), u (AME2020).
pub const DEUTERIUM_MASS: f64 = 2.014_101_778;
/// Mass of ³H (tritium, symbol T), u (AME2020).
pub const TRITIUM_MASS: f64 = 3.016_049_281;

/// Masses of one element closer than this (u) are one species; a mass this close to the
/// element's standard atomic weight is the standard mass (its atom keeps the element
/// symbol). Isotopes of an element differ by about 1 u; tabulated weights of one element
/// from different editions of the tables differ by less than 0.02 u.
pub const MASS_TOLERANCE: f64 = 0.05;

/// Species codes are `z + SPECIES_STRIDE * k`, k the rank of the atom's mass among the
/// distinct masses of its element (lightest 0).
pub const SPECIES_STRIDE: i64 = 1000;

/// Symbols that name one nuclide rather than an element: (symbol, Z, mass in u).
const NUCLIDES: [(&str, i64, f64); 2] = [("D", 1, DEUTERIUM_MASS), ("T", 1, TRITIUM_MASS)];

fn entry(z: i64) -> Option<&'static (&'static str, f64, f64)> {
    if (1..=118).contains(&z) {
        ELEMENTS.get((z - 1) as usize)
    } else {
        None
    }
}

/// Atomic number of an element symbol, case-insensitive ("Cl", "CL", "cl" → 17).
///
/// Surrounding whitespace is ignored. Only real element symbols are accepted.
///
/// # Errors
/// `Error::UnknownElement` for anything that is not an element symbol.
pub fn atomic_number(symbol: &str) -> Result<i64> {
    let s = symbol.trim();
    let found = ELEMENTS
        .iter()
        .position(|(sym, _, _)| sym.eq_ignore_ascii_case(s));
    match found {
        Some(i) if !s.is_empty() => Ok(i as i64 + 1),
        _ => Err(Error::UnknownElement {
            symbol: symbol.to_string(),
        }),
    }
}

/// Atomic number and, for a symbol that names one nuclide (`D` = ²H, `T` = ³H), its mass in
/// u; `None` as mass for an element symbol. Case-insensitive like [`atomic_number`].
///
/// # Errors
/// `Error::UnknownElement` for anything that is neither an element nor a nuclide symbol.
pub fn nuclide(symbol: &str) -> Result<(i64, Option<f64>)> {
    let s = symbol.trim();
    if let Some((_, z, m)) = NUCLIDES.iter().find(|(n, _, _)| n.eq_ignore_ascii_case(s)) {
        return Ok((*z, Some(*m)));
    }
    atomic_number(symbol).map(|z| (z, None))
}

/// The symbol of an atom of element `z` and mass `mass` u: the element symbol for the
/// standard mass (within [`MASS_TOLERANCE`] of the standard atomic weight), `D` / `T` for
/// ²H / ³H, otherwise the mass number (the nearest whole number) before the element symbol
/// (`13C`). `None` for `z` outside 1..=118.
pub fn species_symbol(z: i64, mass: f64) -> Option<String> {
    let (sym, standard, _) = entry(z)?;
    if (mass - standard).abs() <= MASS_TOLERANCE {
        return Some((*sym).to_string());
    }
    if let Some((n, _, _)) = NUCLIDES
        .iter()
        .find(|(_, nz, m)| *nz == z && (mass - m).abs() <= MASS_TOLERANCE)
    {
        return Some((*n).to_string());
    }
    Some(format!("{}{sym}", mass.round() as i64))
}

/// How the detector tells atoms apart and weighs them.
#[derive(Debug, Clone, PartialEq)]
pub struct Species {
    /// Per atom: equal codes ⇔ same element and same mass (within [`MASS_TOLERANCE`]).
    /// Without masses the codes are the atomic numbers.
    pub codes: Vec<i64>,
    /// Per atom: the mass given, else the standard atomic weight, u.
    pub masses: Vec<f64>,
}

impl Species {
    /// Species of atoms with atomic numbers `numbers` (checked: 1..=118) and optional masses
    /// (u; `None` = the standard atomic weights).
    ///
    /// Masses of one element are sorted and split wherever two successive ones differ by
    /// more than [`MASS_TOLERANCE`]; the k-th group (lightest first) has code
    /// `z + SPECIES_STRIDE * k`. So the codes do not depend on atom order, and atoms whose
    /// masses all agree keep their atomic number as code.
    ///
    /// # Errors
    /// `UnknownAtomicNumber`; `InvalidArgument` when `masses` has the wrong length;
    /// `BadMass` for a mass that is not a positive finite number.
    pub fn new(numbers: &[i64], masses: Option<&[f64]>) -> Result<Species> {
        let standard = standard_masses(numbers)?;
        let Some(given) = masses else {
            return Ok(Species {
                codes: numbers.to_vec(),
                masses: standard,
            });
        };
        if given.len() != numbers.len() {
            return Err(Error::InvalidArgument {
                name: "masses".into(),
                reason: format!(
                    "{} masses for {} atoms: they must match",
                    given.len(),
                    numbers.len()
                ),
            });
        }
        if let Some((atom, &value)) = given
            .iter()
            .enumerate()
            .find(|(_, m)| !(m.is_finite() && **m > 0.0))
        {
            return Err(Error::BadMass { atom, value });
        }
        // Every mass near its standard weight: the masses of each element then lie within
        // MASS_TOLERANCE of each other, none splits them, and the codes are the numbers.
        let near = |(g, s): (&f64, &f64)| (g - s).abs() <= 0.4 * MASS_TOLERANCE;
        if given.iter().zip(&standard).all(near) {
            return Ok(Species {
                codes: numbers.to_vec(),
                masses: given.to_vec(),
            });
        }
        let mut order: Vec<usize> = (0..numbers.len()).collect();
        order.sort_unstable_by(|&i, &j| {
            numbers[i]
                .cmp(&numbers[j])
                .then(given[i].total_cmp(&given[j]))
        });
        let mut codes = vec![0i64; numbers.len()];
        let mut rank = 0i64;
        for (s, &i) in order.iter().enumerate() {
            if s > 0 {
                let p = order[s - 1];
                if numbers[p] != numbers[i] {
                    rank = 0;
                } else if given[i] - given[p] > MASS_TOLERANCE {
                    rank += 1;
                }
            }
            codes[i] = numbers[i] + SPECIES_STRIDE * rank;
        }
        Ok(Species {
            codes,
            masses: given.to_vec(),
        })
    }

    /// The symbol of every atom ([`species_symbol`]); `numbers` as given to [`Species::new`].
    ///
    /// # Errors
    /// `UnknownAtomicNumber` (or `LengthMismatch` when `numbers` is not one per atom).
    pub fn symbols(&self, numbers: &[i64]) -> Result<Vec<String>> {
        if numbers.len() != self.masses.len() {
            return Err(Error::LengthMismatch {
                n_positions: self.masses.len(),
                n_numbers: numbers.len(),
            });
        }
        numbers
            .iter()
            .zip(&self.masses)
            .enumerate()
            .map(|(atom, (&z, &m))| {
                species_symbol(z, m).ok_or(Error::UnknownAtomicNumber { atom, number: z })
            })
            .collect()
    }
}

/// Element symbol of atomic number `z` (1..=118), `None` outside that range.
pub fn symbol(z: i64) -> Option<&'static str> {
    entry(z).map(|e| e.0)
}

/// Standard atomic weight of element `z` in u (IUPAC 2021), `None` outside 1..=118.
pub fn mass(z: i64) -> Option<f64> {
    entry(z).map(|e| e.1)
}

/// Covalent radius of element `z` in Å (Cordero et al. 2008; 1.5 Å where they give none),
/// `None` outside 1..=118.
pub fn covalent_radius(z: i64) -> Option<f64> {
    entry(z).map(|e| e.2)
}

/// Check a structure before any geometry: non-empty, equal lengths, finite coordinates within
/// ±1e6 Å, atomic numbers in 1..=118.
///
/// # Errors
/// `EmptyStructure`, `LengthMismatch`, `NonFiniteCoordinate { atom }`,
/// `CoordinateTooLarge { atom, value }`, `UnknownAtomicNumber { atom, number }` — the first
/// problem found, atoms scanned in input order.
pub fn validate(positions: &[[f64; 3]], numbers: &[i64]) -> Result<()> {
    if positions.len() != numbers.len() {
        return Err(Error::LengthMismatch {
            n_positions: positions.len(),
            n_numbers: numbers.len(),
        });
    }
    if positions.is_empty() {
        return Err(Error::EmptyStructure);
    }
    for (atom, (p, &z)) in positions.iter().zip(numbers).enumerate() {
        for &v in p {
            if !v.is_finite() {
                return Err(Error::NonFiniteCoordinate { atom });
            }
            if v.abs() > MAX_COORDINATE {
                return Err(Error::CoordinateTooLarge { atom, value: v });
            }
        }
        if !(1..=118).contains(&z) {
            return Err(Error::UnknownAtomicNumber { atom, number: z });
        }
    }
    Ok(())
}

/// Standard atomic weights of the atoms, u.
///
/// # Errors
/// `UnknownAtomicNumber` for a number outside 1..=118.
pub fn standard_masses(numbers: &[i64]) -> Result<Vec<f64>> {
    numbers
        .iter()
        .enumerate()
        .map(|(atom, &z)| mass(z).ok_or(Error::UnknownAtomicNumber { atom, number: z }))
        .collect()
}

/// Centre of mass in Å, weighted by the standard atomic weights.
///
/// # Errors
/// Everything `validate` reports.
pub fn center_of_mass(positions: &[[f64; 3]], numbers: &[i64]) -> Result<[f64; 3]> {
    validate(positions, numbers)?;
    Ok(weighted_center(positions, &standard_masses(numbers)?))
}

/// Centre of mass in Å for the given masses (u), one per position (not checked).
pub fn weighted_center(positions: &[[f64; 3]], m: &[f64]) -> [f64; 3] {
    let mut total = 0.0;
    let mut c = [0.0; 3];
    for (p, &w) in positions.iter().zip(m) {
        total += w;
        for k in 0..3 {
            c[k] += w * p[k];
        }
    }
    [c[0] / total, c[1] / total, c[2] / total]
}

/// Inertia tensor about the centre of mass, u·Å², row-major 3×3.
///
/// I = Σ m (|r|² 1 − r rᵀ) with r measured from the centre of mass.
///
/// # Errors
/// Everything `validate` reports.
pub fn inertia_tensor(positions: &[[f64; 3]], numbers: &[i64]) -> Result<[[f64; 3]; 3]> {
    validate(positions, numbers)?;
    Ok(weighted_inertia(positions, &standard_masses(numbers)?))
}

/// Inertia tensor (u·Å², row-major) about the centre of mass of the given masses (u), one
/// per position (not checked).
pub fn weighted_inertia(positions: &[[f64; 3]], m: &[f64]) -> [[f64; 3]; 3] {
    let c = weighted_center(positions, m);
    let mut t = [[0.0; 3]; 3];
    for (p, &w) in positions.iter().zip(m) {
        let r = [p[0] - c[0], p[1] - c[1], p[2] - c[2]];
        let r2 = r[0] * r[0] + r[1] * r[1] + r[2] * r[2];
        for i in 0..3 {
            for j in 0..3 {
                let d = if i == j { r2 } else { 0.0 };
                t[i][j] += w * (d - r[i] * r[j]);
            }
        }
    }
    t
}

/// Principal moments (ascending, u·Å²) and principal axes (rows, unit vectors, a right-handed
/// set: axes[2] = axes[0] × axes[1]) of a symmetric 3×3 tensor.
///
/// The sign of each axis is fixed so that its component of largest magnitude is positive
/// (the third axis then follows from the cross product).
pub fn principal_axes(tensor: &[[f64; 3]; 3]) -> ([f64; 3], [[f64; 3]; 3]) {
    let m = Matrix3::from_fn(|i, j| tensor[i][j]);
    let eig = SymmetricEigen::new(m);
    let mut order = [0usize, 1, 2];
    order.sort_by(|&a, &b| eig.eigenvalues[a].total_cmp(&eig.eigenvalues[b]));
    let mut moments = [0.0; 3];
    let mut axes = [[0.0; 3]; 3];
    for (k, &i) in order.iter().enumerate() {
        moments[k] = eig.eigenvalues[i];
        let v = eig.eigenvectors.column(i);
        let mut a = [v[0], v[1], v[2]];
        let big = a
            .iter()
            .copied()
            .fold(0.0_f64, |acc, x| if x.abs() > acc.abs() { x } else { acc });
        if big < 0.0 {
            a = [-a[0], -a[1], -a[2]];
        }
        axes[k] = a;
    }
    let (a, b) = (axes[0], axes[1]);
    axes[2] = [
        a[1] * b[2] - a[2] * b[1],
        a[2] * b[0] - a[0] * b[2],
        a[0] * b[1] - a[1] * b[0],
    ];
    (moments, axes)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn test_symbols_round_trip_for_every_element() {
        for z in 1..=118 {
            let s = symbol(z).unwrap();
            assert_eq!(atomic_number(s).unwrap(), z);
            assert_eq!(atomic_number(&s.to_uppercase()).unwrap(), z);
            assert_eq!(atomic_number(&s.to_lowercase()).unwrap(), z);
        }
    }

    #[test]
    fn test_symbol_lookup_is_case_insensitive() {
        assert_eq!(atomic_number("C").unwrap(), 6);
        assert_eq!(atomic_number("c").unwrap(), 6);
        assert_eq!(atomic_number("Cl").unwrap(), 17);
        assert_eq!(atomic_number("CL").unwrap(), 17);
        assert_eq!(atomic_number(" cl ").unwrap(), 17);
        assert_eq!(atomic_number("Og").unwrap(), 118);
    }

    #[test]
    fn test_unknown_symbols_are_errors() {
        // D and T name nuclides, not elements: `nuclide` reads them, `atomic_number` does not.
        for s in ["", "X", "D", "T", "Xx", "Carbon", "12"] {
            assert_eq!(
                atomic_number(s),
                Err(Error::UnknownElement {
                    symbol: s.to_string()
                })
            );
        }
        for s in ["", "X", "Xx", "Carbon", "12", "DD"] {
            assert!(nuclide(s).is_err(), "{s}");
        }
    }

    #[test]
    fn test_nuclide_symbols_are_hydrogen_isotopes() {
        // Source: AME2020 (Wang et al., Chin. Phys. C 45, 030003, 2021), from memory:
        // m(²H) = 2.014101778 u, m(³H) = 3.016049281 u.
        assert_eq!(nuclide("D").unwrap(), (1, Some(2.014_101_778)));
        assert_eq!(nuclide(" t ").unwrap(), (1, Some(3.016_049_281)));
        assert_eq!(nuclide("H").unwrap(), (1, None));
        assert_eq!(nuclide("Cl").unwrap(), (17, None));
    }

    #[test]
    fn test_species_symbols_name_isotopes_only_where_masses_differ() {
        assert_eq!(species_symbol(1, 1.008).unwrap(), "H");
        assert_eq!(species_symbol(1, PROTIUM_MASS).unwrap(), "H");
        assert_eq!(species_symbol(1, 2.014).unwrap(), "D");
        assert_eq!(species_symbol(1, TRITIUM_MASS).unwrap(), "T");
        // ¹³C: 13.003355 u (AME2020, from memory).
        assert_eq!(species_symbol(6, 13.003_355).unwrap(), "13C");
        assert_eq!(species_symbol(6, 12.011).unwrap(), "C");
        // ³⁷Cl: 36.965903 u (AME2020, from memory); the standard weight of Cl is 35.45.
        assert_eq!(species_symbol(17, 36.965_903).unwrap(), "37Cl");
        assert_eq!(species_symbol(0, 1.0), None);
    }

    #[test]
    fn test_species_split_elements_by_mass_only() {
        // CH2D2: C, H, H, D, D in scrambled order; the codes do not depend on the order.
        let z = [1, 6, 1, 1, 1];
        let m = [DEUTERIUM_MASS, 12.011, 1.008, DEUTERIUM_MASS, 1.008];
        let sp = Species::new(&z, Some(&m)).unwrap();
        assert_eq!(sp.codes, vec![1001, 6, 1, 1001, 1]);
        assert_eq!(sp.masses, m.to_vec());
        assert_eq!(sp.symbols(&z).unwrap(), vec!["D", "C", "H", "D", "H"]);
        // Masses that agree within MASS_TOLERANCE are one species (1.008 vs ¹H).
        let sp = Species::new(&[1, 1], Some(&[1.008, PROTIUM_MASS])).unwrap();
        assert_eq!(sp.codes[0], sp.codes[1]);
        // All D: one species, coded by the atomic number.
        let sp = Species::new(&[1, 1], Some(&[DEUTERIUM_MASS; 2])).unwrap();
        assert_eq!(sp.codes, vec![1, 1]);
        // Without masses: the atomic numbers and the standard weights.
        let sp = Species::new(&[8, 1], None).unwrap();
        assert_eq!(sp.codes, vec![8, 1]);
        assert_eq!(sp.masses, vec![15.999, 1.008]);
    }

    #[test]
    fn test_species_reject_bad_masses() {
        assert_eq!(
            Species::new(&[1, 1], Some(&[1.0, -2.0])),
            Err(Error::BadMass {
                atom: 1,
                value: -2.0
            })
        );
        assert!(matches!(
            Species::new(&[1, 1], Some(&[1.0, f64::NAN])),
            Err(Error::BadMass { atom: 1, .. })
        ));
        assert!(matches!(
            Species::new(&[1, 1], Some(&[1.0])),
            Err(Error::InvalidArgument { .. })
        ));
        assert!(matches!(
            Species::new(&[0], None),
            Err(Error::UnknownAtomicNumber { atom: 0, number: 0 })
        ));
    }

    #[test]
    fn test_reference_weights_and_radii() {
        // Source: IUPAC 2021 standard atomic weights (abridged), from memory.
        assert!((mass(1).unwrap() - 1.008).abs() < 1e-9);
        assert!((mass(6).unwrap() - 12.011).abs() < 1e-9);
        assert!((mass(8).unwrap() - 15.999).abs() < 1e-9);
        assert!((mass(26).unwrap() - 55.845).abs() < 1e-9);
        assert!((mass(92).unwrap() - 238.03).abs() < 1e-9);
        // Source: Cordero et al., Dalton Trans. 2008, 2832, table 2 (from memory).
        assert!((covalent_radius(1).unwrap() - 0.31).abs() < 1e-9);
        assert!((covalent_radius(6).unwrap() - 0.76).abs() < 1e-9);
        assert!((covalent_radius(17).unwrap() - 1.02).abs() < 1e-9);
        assert_eq!(covalent_radius(118), Some(DEFAULT_COVALENT_RADIUS));
        assert_eq!(symbol(0), None);
        assert_eq!(mass(119), None);
        assert_eq!(covalent_radius(-3), None);
    }

    #[test]
    fn test_weights_increase_roughly_with_z() {
        // common practice: atomic weights grow with Z except for a few well-known inversions.
        // Checked up to Am, where the bracketed mass numbers stop being weights.
        let inversions: Vec<i64> = (1..95)
            .filter(|&z| mass(z + 1).unwrap() < mass(z).unwrap())
            .collect();
        assert_eq!(inversions, vec![18, 27, 52, 90, 92, 94]);
    }

    #[test]
    fn test_validate_reports_each_problem() {
        let ok = [[0.0, 0.0, 0.0], [1.0, 0.0, 0.0]];
        assert_eq!(validate(&ok, &[1, 1]), Ok(()));
        assert_eq!(validate(&[], &[]), Err(Error::EmptyStructure));
        assert_eq!(
            validate(&ok, &[1]),
            Err(Error::LengthMismatch {
                n_positions: 2,
                n_numbers: 1
            })
        );
        let nan = [[0.0, 0.0, 0.0], [1.0, f64::NAN, 0.0]];
        assert_eq!(
            validate(&nan, &[1, 1]),
            Err(Error::NonFiniteCoordinate { atom: 1 })
        );
        let inf = [[f64::INFINITY, 0.0, 0.0]];
        assert_eq!(
            validate(&inf, &[1]),
            Err(Error::NonFiniteCoordinate { atom: 0 })
        );
        let big = [[0.0, 0.0, 0.0], [0.0, 0.0, -2e6]];
        assert_eq!(
            validate(&big, &[1, 1]),
            Err(Error::CoordinateTooLarge {
                atom: 1,
                value: -2e6
            })
        );
        assert_eq!(
            validate(&ok, &[1, 119]),
            Err(Error::UnknownAtomicNumber {
                atom: 1,
                number: 119
            })
        );
        assert_eq!(
            validate(&ok, &[0, 1]),
            Err(Error::UnknownAtomicNumber { atom: 0, number: 0 })
        );
    }

    #[test]
    fn test_center_of_mass_of_carbon_monoxide() {
        let p = [[0.0, 0.0, 0.0], [0.0, 0.0, 1.128]];
        let c = center_of_mass(&p, &[6, 8]).unwrap();
        let expect = 1.128 * 15.999 / (12.011 + 15.999);
        assert!((c[2] - expect).abs() < 1e-12);
        assert_eq!((c[0], c[1]), (0.0, 0.0));
    }

    #[test]
    fn test_inertia_of_a_square_is_symmetric_top() {
        // Four equal masses at (±1, 0, 0), (0, ±1, 0): I_zz = 4m, I_xx = I_yy = 2m.
        let p = [
            [1.0, 0.0, 5.0],
            [-1.0, 0.0, 5.0],
            [0.0, 1.0, 5.0],
            [0.0, -1.0, 5.0],
        ];
        let t = inertia_tensor(&p, &[6; 4]).unwrap();
        let m = mass(6).unwrap();
        let (moments, axes) = principal_axes(&t);
        assert!((moments[0] - 2.0 * m).abs() < 1e-9);
        assert!((moments[1] - 2.0 * m).abs() < 1e-9);
        assert!((moments[2] - 4.0 * m).abs() < 1e-9);
        assert!((axes[2][2].abs() - 1.0).abs() < 1e-9);
        // Right-handed, orthonormal.
        let a = axes;
        let det = a[0][0] * (a[1][1] * a[2][2] - a[1][2] * a[2][1])
            - a[0][1] * (a[1][0] * a[2][2] - a[1][2] * a[2][0])
            + a[0][2] * (a[1][0] * a[2][1] - a[1][1] * a[2][0]);
        assert!((det - 1.0).abs() < 1e-9);
    }

    #[test]
    fn test_center_of_mass_propagates_validation_errors() {
        assert_eq!(center_of_mass(&[], &[]), Err(Error::EmptyStructure));
        assert!(inertia_tensor(&[[0.0, 0.0, f64::NAN]], &[1]).is_err());
    }
}
