//! The one error type of the core. Every fallible core function returns
//! `Result<T, Error>`; `rust/python/mod.rs` maps each variant onto exactly one Python
//! exception class of `python/gammatrace/errors.py`.
//!
//! Adding a variant: add it here with a `Display` sentence that names the atom,
//! frame or line, then add its mapping in `rust/python/mod.rs` (`exception_class`).

use std::fmt;

/// Everything that can go wrong in the core, with the facts a chemist needs.
#[derive(Debug, Clone, PartialEq)]
pub enum Error {
    /// The structure has no atoms.
    EmptyStructure,
    /// Coordinates and atomic numbers disagree in length.
    LengthMismatch {
        /// Rows of the coordinate array.
        n_positions: usize,
        /// Length of the atomic-number array.
        n_numbers: usize,
    },
    /// A coordinate is NaN or infinite.
    NonFiniteCoordinate {
        /// Zero-based atom index.
        atom: usize,
    },
    /// A coordinate is so large that tolerant comparisons lose meaning.
    CoordinateTooLarge {
        /// Zero-based atom index.
        atom: usize,
        /// The offending value, Å.
        value: f64,
    },
    /// An atomic number outside 1..=118.
    UnknownAtomicNumber {
        /// Zero-based atom index.
        atom: usize,
        /// The number received.
        number: i64,
    },
    /// A mass that is not a positive finite number of u.
    BadMass {
        /// Zero-based atom index.
        atom: usize,
        /// The value received, u.
        value: f64,
    },
    /// An element symbol that is not in the periodic table.
    UnknownElement {
        /// The symbol as read.
        symbol: String,
    },
    /// Two atoms closer than the tolerance: the structure is not a molecule.
    OverlappingAtoms {
        /// First atom (zero-based).
        first: usize,
        /// Second atom (zero-based).
        second: usize,
        /// Their distance, Å.
        distance: f64,
        /// The tolerance in force, Å.
        tolerance: f64,
    },
    /// The tolerance is not a positive finite distance.
    BadTolerance {
        /// The value received.
        value: f64,
    },
    /// A symmetry operation failed to map an atom onto an atom of the same element.
    NotASymmetry {
        /// Zero-based atom index with no image.
        atom: usize,
        /// Distance to the nearest atom of the same element, Å (infinite if none).
        distance: f64,
    },
    /// Two atoms map onto the same atom under an operation (the tolerance is too loose for the
    /// spacing of the structure).
    AmbiguousImage {
        /// The atom that claimed the image first (zero-based).
        first: usize,
        /// The second atom mapped onto it (zero-based).
        second: usize,
        /// The atom both map onto (zero-based).
        image: usize,
    },
    /// The operations found do not close into a finite group (tolerance too loose or too tight).
    GroupClosure {
        /// What went wrong, in words.
        reason: String,
    },
    /// A malformed XYZ file.
    MalformedXyz {
        /// File name as given.
        source: String,
        /// Zero-based frame index.
        frame: usize,
        /// One-based line number.
        line: usize,
        /// What is wrong with the line.
        reason: String,
    },
    /// An input/output failure (missing file, permission).
    Io {
        /// File name as given.
        source: String,
        /// The operating system's message.
        reason: String,
    },
    /// A bug: the core panicked while working on one structure of a batch.
    Internal {
        /// Zero-based structure index in the batch.
        structure: usize,
        /// The panic message.
        reason: String,
    },
    /// An argument of the wrong shape or value (names the argument).
    InvalidArgument {
        /// Argument name.
        name: String,
        /// What is wrong with it.
        reason: String,
    },
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Error::EmptyStructure => write!(f, "the structure has no atoms"),
            Error::LengthMismatch {
                n_positions,
                n_numbers,
            } => write!(
                f,
                "{n_positions} coordinate rows but {n_numbers} atomic numbers: they must match"
            ),
            Error::NonFiniteCoordinate { atom } => {
                write!(f, "atom {atom} has a NaN or infinite coordinate")
            }
            Error::CoordinateTooLarge { atom, value } => write!(
                f,
                "atom {atom} has coordinate {} Å, beyond the supported range of ±1e6 Å",
                length(*value)
            ),
            Error::UnknownAtomicNumber { atom, number } => {
                write!(f, "atom {atom} has atomic number {number}, outside 1..=118")
            }
            Error::BadMass { atom, value } => {
                write!(
                    f,
                    "atom {atom} has mass {value} u: a mass must be a positive number"
                )
            }
            Error::UnknownElement { symbol } => {
                write!(f, "unknown element symbol '{symbol}'")
            }
            Error::OverlappingAtoms {
                first,
                second,
                distance,
                tolerance,
            } => write!(
                f,
                "atoms {first} and {second} are {} Å apart, within the tolerance {} Å: \
                 overlapping atoms",
                length(*distance),
                length(*tolerance)
            ),
            Error::BadTolerance { value } => write!(
                f,
                "tolerance must be a positive finite distance in Å, got {}",
                length(*value)
            ),
            Error::NotASymmetry { atom, distance } => write!(
                f,
                "operation is not a symmetry: atom {atom} has no image of its element and \
                 mass (nearest at {} Å)",
                length(*distance)
            ),
            Error::AmbiguousImage {
                first,
                second,
                image,
            } => write!(
                f,
                "atoms {first} and {second} both map onto atom {image} under one operation: \
                 the tolerance is too loose for this structure"
            ),
            Error::GroupClosure { reason } => {
                write!(f, "symmetry operations do not form a group: {reason}")
            }
            Error::MalformedXyz {
                source,
                frame,
                line,
                reason,
            } => {
                write!(
                    f,
                    "line {line} of {} (frame {frame}): {}",
                    printable(source),
                    printable(reason)
                )
            }
            Error::Io { source, reason } => write!(f, "{source}: {reason}"),
            Error::InvalidArgument { name, reason } => write!(f, "{name}: {reason}"),
            Error::Internal { structure, reason } => write!(
                f,
                "internal error while analysing structure {structure} (please report): {reason}"
            ),
        }
    }
}

impl std::error::Error for Error {}

/// A length (or any small positive quantity) as a reader writes it: four significant
/// digits without an exponent (`1.524`, `0.0152`, `1250`), an exponent only below 1e-3
/// (`3.2e-05`) or from 1e4 on (`1.2e+07`), trailing zeros dropped; `0` for zero. The same
/// rule as `gammatrace.text.format_length` on the Python side.
pub fn length(x: f64) -> String {
    if !x.is_finite() {
        return x.to_string();
    }
    if x == 0.0 {
        return "0".to_string();
    }
    let a = x.abs();
    if (1e-3..1e4).contains(&a) {
        let decimals = (3 - a.log10().floor() as i32).max(0) as usize;
        let text = format!("{x:.decimals$}");
        let rounded: f64 = text.parse().unwrap_or(x);
        // rounding may carry into 1e4 (9999.96): fall through to the exponent form then
        if rounded.abs() < 1e4 {
            return if text.contains('.') {
                text.trim_end_matches('0').trim_end_matches('.').to_string()
            } else {
                text
            };
        }
    }
    let digits = if a < 1e-3 { 1 } else { 3 };
    let text = format!("{x:.digits$e}");
    let (mantissa, exponent) = text.split_once('e').unwrap_or((&text, "0"));
    let exponent: i32 = exponent.parse().unwrap_or(0);
    let mantissa = if mantissa.contains('.') {
        mantissa.trim_end_matches('0').trim_end_matches('.')
    } else {
        mantissa
    };
    let sign = if exponent < 0 { '-' } else { '+' };
    format!("{mantissa}e{sign}{:02}", exponent.abs())
}

/// Text quoted from a file, with control characters (ESC, CR, NUL, a stray byte-order
/// mark...) written as escapes, so that a message stays one printable line.
fn printable(text: &str) -> String {
    text.chars()
        .flat_map(|c| {
            let escape = c.is_control() || c == '\u{feff}';
            let shown: Vec<char> = if escape {
                c.escape_default().collect()
            } else {
                vec![c]
            };
            shown
        })
        .collect()
}

/// Shorthand for core results.
pub type Result<T> = std::result::Result<T, Error>;

#[cfg(test)]
mod tests {
    use super::length;

    #[test]
    fn lengths_read_naturally() {
        // common practice: plain decimals for everyday sizes, an exponent for tiny values
        let cases = [
            (1.524, "1.524"),
            (1.5240001, "1.524"),
            (0.0152, "0.0152"),
            (0.001, "0.001"),
            (2.0, "2"),
            (1250.0, "1250"),
            (9999.96, "1e+04"),
            (3.2e-5, "3.2e-05"),
            (-3.24e-5, "-3.2e-05"),
            (5e7, "5e+07"),
            (1.23456e7, "1.235e+07"),
            (0.0, "0"),
        ];
        for (x, want) in cases {
            assert_eq!(length(x), want, "{x}");
        }
        assert_eq!(length(f64::NAN), "NaN");
    }
}
