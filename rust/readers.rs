//! Fast multi-frame XYZ reader (work in progress).
