//! How the `heft` binary's allocator hands memory back, shared with the
//! benchmarks (which measure with the binary's allocator and settings).
//!
//! heft allocates with mimalloc, which returns memory freed by an evaluation
//! to the operating system after a second. Evaluating a large sheet again
//! (the notebook reloading it, a revision compared with the last) then
//! faults every page in anew, and on a virtual machine a fresh page costs
//! 1–3 ms per MB: the million-cell benchmark sheet, evaluated in a loop,
//! took 1.94 s a run with the one-second delay and 1.64 s with freed memory
//! kept. heft keeps freed memory for ten seconds (jemalloc's default decay
//! time), long enough for the next evaluation to reuse it; an idle notebook
//! still gives it back.

use std::ffi::c_long;

/// mimalloc's `mi_option_purge_delay`: its place in the C enum
/// `mi_option_e` (the same from mimalloc 2.1 on), which libmimalloc-sys
/// does not name. A test pins it.
const PURGE_DELAY: libmimalloc_sys::mi_option_t = 15;

/// How long freed memory is kept before it goes back to the system.
const KEEP_FREED_MS: c_long = 10_000;

/// Sets heft's allocator options. Call first thing in `main`; harmless to
/// call again, and when mimalloc is not the global allocator.
pub fn configure() {
    // SAFETY: mi_option_set only records an option's value; it takes any
    // option number and value, at any time, from any thread.
    unsafe { libmimalloc_sys::mi_option_set(PURGE_DELAY, KEEP_FREED_MS) }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_purge_delay_is_the_option_that_is_set() {
        // mimalloc 3 keeps freed memory 1,000 ms by default: option 15 must
        // hold that before heft sets it (an upgrade that renumbers the
        // options fails here), and heft's value after.
        // SAFETY: reading an option has no preconditions.
        let default = unsafe { libmimalloc_sys::mi_option_get(PURGE_DELAY) };
        if std::env::var_os("MIMALLOC_PURGE_DELAY").is_none() {
            assert_eq!(default, 1_000);
        }
        configure();
        // SAFETY: as above.
        assert_eq!(
            unsafe { libmimalloc_sys::mi_option_get(PURGE_DELAY) },
            KEEP_FREED_MS
        );
    }
}
