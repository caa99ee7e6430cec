//! Where and when work runs in parallel: one pool builder and one chunking rule for every
//! rayon user (batch.rs, the readers, and the count and lookup kernels).
//!
//! Kernels split `0..n` into fixed chunks of [`CHUNK`] items and run the chunks on the current
//! rayon pool when `n` is above the kernel's threshold, serially otherwise. Results come back
//! in chunk order and chunks never depend on the thread count, so every result (float sums
//! included, when added in chunk order) is bit-identical for any number of threads. Entry
//! points that own their threads (batch.rs) take `n_threads` (0 = all cores) and run on a
//! pool of their own from [`pool`] or [`install`]; wrapping any kernel call in [`install`]
//! chooses its thread count the same way.

use crate::error::{Error, Result};
use rayon::prelude::*;
use std::ops::Range;

/// Items per chunk. Fixed, so float partial sums never depend on the thread count.
pub const CHUNK: usize = 4096;

/// A rayon pool of `n_threads` threads (0 = one per core).
///
/// # Errors
/// `InvalidArgument` naming `n_threads` when the pool cannot be built.
pub fn pool(n_threads: usize) -> Result<rayon::ThreadPool> {
    rayon::ThreadPoolBuilder::new()
        .num_threads(n_threads)
        .build()
        .map_err(|e| Error::InvalidArgument {
            name: "n_threads".into(),
            reason: e.to_string(),
        })
}

/// Runs `f` on a pool of its own with `n_threads` threads (0 = one per core): every kernel
/// that `f` calls splits its chunks over that pool.
///
/// # Errors
/// As [`pool`].
pub fn install<T: Send>(n_threads: usize, f: impl FnOnce() -> T + Send) -> Result<T> {
    Ok(pool(n_threads)?.install(f))
}

/// Chunk `c` of `0..n`.
#[inline]
pub fn chunk_range(c: usize, n: usize) -> Range<usize> {
    c * CHUNK..((c + 1) * CHUNK).min(n)
}

/// Runs `f` on the consecutive chunks of `0..n`, on the current rayon pool when `n` is above
/// `threshold` and serially otherwise; results in chunk order.
pub fn map_chunks<T, F>(n: usize, threshold: usize, f: F) -> Vec<T>
where
    T: Send,
    F: Fn(Range<usize>) -> T + Sync + Send,
{
    let n_chunks = n.div_ceil(CHUNK);
    if n > threshold {
        (0..n_chunks)
            .into_par_iter()
            .map(|c| f(chunk_range(c, n)))
            .collect()
    } else {
        (0..n_chunks).map(|c| f(chunk_range(c, n))).collect()
    }
}

/// Runs `f(start, chunk)` on the consecutive chunks of `out` (`start` = index of the chunk's
/// first item), in parallel above `threshold` items as [`map_chunks`]; results in chunk order.
pub fn map_chunks_mut<U, T, F>(out: &mut [U], threshold: usize, f: F) -> Vec<T>
where
    U: Send,
    T: Send,
    F: Fn(usize, &mut [U]) -> T + Sync + Send,
{
    if out.len() > threshold {
        out.par_chunks_mut(CHUNK)
            .enumerate()
            .map(|(c, part)| f(c * CHUNK, part))
            .collect()
    } else {
        out.chunks_mut(CHUNK)
            .enumerate()
            .map(|(c, part)| f(c * CHUNK, part))
            .collect()
    }
}

/// `f` applied to every item, in parallel (current pool) when there are more than
/// `threshold` items; results in input order.
pub fn map_items<U, T, F>(items: &[U], threshold: usize, f: F) -> Vec<T>
where
    U: Sync,
    T: Send,
    F: Fn(usize, &U) -> T + Sync + Send,
{
    if items.len() > threshold {
        items.par_iter().enumerate().map(|(k, u)| f(k, u)).collect()
    } else {
        items.iter().enumerate().map(|(k, u)| f(k, u)).collect()
    }
}

/// Runs `f` on each item, consuming the items (so an item may hold a mutable part of an
/// output), as [`map_items`]; results in item order.
pub fn map_owned<U, T, F>(items: Vec<U>, threshold: usize, f: F) -> Vec<T>
where
    U: Send,
    T: Send,
    F: Fn(U) -> T + Sync + Send,
{
    if items.len() > threshold {
        items.into_par_iter().map(f).collect()
    } else {
        items.into_iter().map(f).collect()
    }
}

/// `f(k, &mut items[k])` for every item, in parallel when there are more than `threshold`
/// items; results in item order.
pub fn map_items_mut<U, T, F>(items: &mut [U], threshold: usize, f: F) -> Vec<T>
where
    U: Send,
    T: Send,
    F: Fn(usize, &mut U) -> T + Sync + Send,
{
    if items.len() > threshold {
        items
            .par_iter_mut()
            .enumerate()
            .map(|(k, u)| f(k, u))
            .collect()
    } else {
        items.iter_mut().enumerate().map(|(k, u)| f(k, u)).collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn chunks_cover_the_range_in_order_for_any_thread_count() {
        let n = 3 * CHUNK + 17;
        for threads in [1, 3] {
            let got = install(threads, || map_chunks(n, 0, |r| (r.start, r.end))).unwrap();
            assert_eq!(got.len(), 4);
            assert_eq!(got[0], (0, CHUNK));
            assert_eq!(got[3], (3 * CHUNK, n));
            assert!(got.windows(2).all(|w| w[0].1 == w[1].0));
            let serial = map_chunks(n, usize::MAX, |r| (r.start, r.end));
            assert_eq!(got, serial);
        }
        assert!(map_chunks(0, 0, |r| r.len()).is_empty());
    }

    #[test]
    fn mutable_chunks_and_items_keep_input_order() {
        let mut out = vec![0usize; 2 * CHUNK + 5];
        let starts = install(2, || {
            map_chunks_mut(&mut out, 0, |start, part| {
                for (k, v) in part.iter_mut().enumerate() {
                    *v = start + k;
                }
                start
            })
        })
        .unwrap();
        assert_eq!(starts, vec![0, CHUNK, 2 * CHUNK]);
        assert!(out.iter().enumerate().all(|(k, &v)| k == v));
        let items: Vec<u32> = (0..1000).collect();
        let doubled = map_items(&items, 10, |k, &u| (k, 2 * u));
        assert!(doubled
            .iter()
            .enumerate()
            .all(|(k, &(i, v))| i == k && v == 2 * k as u32));
    }
}
