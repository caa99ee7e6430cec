//! Files: a read-only memory map handed to the in-memory reader.

use super::{read_xyz_bytes, ToNumber, XyzFrames};
use crate::error::{Error, Result};

/// Reads every frame of an XYZ file, memory-mapped.
///
/// `source` names the file in messages (usually the path as the user gave it). An empty
/// file gives zero frames (the caller decides whether that is an error).
///
/// # Errors
/// `Error::Io` when the file cannot be opened or mapped (missing, a directory, no
/// permission). Malformed frames are not errors of the call: see [`read_xyz_bytes`].
pub fn read_xyz_path(
    path: &std::path::Path,
    source: &str,
    to_number: &ToNumber,
) -> Result<XyzFrames> {
    let io = |e: std::io::Error| Error::Io {
        source: source.to_string(),
        reason: e.to_string(),
    };
    let file = std::fs::File::open(path).map_err(io)?;
    let len = file.metadata().map_err(io)?.len();
    if len == 0 {
        return Ok(read_xyz_bytes(&[], source, to_number));
    }
    // SAFETY: the map is read-only and lives only during this call. Another process
    // truncating the file meanwhile could fault; that is the accepted price of mapping
    // (the same as every memory-mapped reader) and is documented for users.
    let map = unsafe { memmap2::Mmap::map(&file) }.map_err(io)?;
    Ok(read_xyz_bytes(&map, source, to_number))
}
