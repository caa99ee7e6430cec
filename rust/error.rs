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
                "atom {atom} has coordinate {value:e} Å, beyond the supported range of ±1e6 Å"
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
                "atoms {first} and {second} are {distance:.3e} Å apart, within the tolerance \
                 {tolerance} Å: overlapping atoms"
            ),
            Error::BadTolerance { value } => write!(
                f,
                "tolerance must be a positive finite distance in Å, got {value:.3e}"
            ),
            Error::NotASymmetry { atom, distance } => write!(
                f,
                "operation is not a symmetry: atom {atom} has no image of its element and \
                 mass (nearest at {distance:.3e} Å)"
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
