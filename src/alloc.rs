//! A global allocator for the binary and the benchmarks: the system allocator, with large
//! blocks marked for transparent huge pages.
//!
//! A million-facet mesh passes through about 230 MB of freshly allocated arrays (facets,
//! vertex ids, edges, adjacency …). With 4 KiB pages every first touch of a page is a page
//! fault: about 58,000 faults and 0.1 s of kernel time for one `calc` on the 2-core
//! development machine, a third of the whole run (`/usr/bin/time -f "%S %R"`). Where the
//! kernel's transparent huge pages are set to `madvise` (a common default), marking blocks
//! of [`HUGE_FROM`] bytes or more with `MADV_HUGEPAGE` lets it back them with 2 MiB pages:
//! about 4,000 faults and 0.02 s. Where huge pages are off or always on, or on other
//! systems, the advice changes nothing; it never changes what is stored.

use std::alloc::{GlobalAlloc, Layout, System};

/// Blocks at least this large are advised to use huge pages (4 MiB).
pub const HUGE_FROM: usize = 4 << 20;

/// The system allocator, advising huge pages for blocks of [`HUGE_FROM`] bytes or more.
pub struct HugePageAlloc;

impl HugePageAlloc {
    /// Advises the kernel to back `[ptr, ptr + size)` with huge pages (best effort).
    fn advise(ptr: *mut u8, size: usize) {
        #[cfg(target_os = "linux")]
        if size >= HUGE_FROM && !ptr.is_null() {
            const PAGE: usize = 4096;
            let start = (ptr as usize).next_multiple_of(PAGE);
            let end = (ptr as usize + size) & !(PAGE - 1);
            if end > start {
                // SAFETY: the range lies inside a block this allocator just handed out;
                // MADV_HUGEPAGE only changes how the kernel backs it, never its contents,
                // and a failure (say, huge pages not configured) is harmless and ignored.
                unsafe {
                    libc::madvise(start as *mut libc::c_void, end - start, libc::MADV_HUGEPAGE);
                }
            }
        }
        #[cfg(not(target_os = "linux"))]
        let _ = (ptr, size);
    }
}

// SAFETY: every call is passed to `System` unchanged; `advise` only adds a hint about
// memory that `System` returned for this layout.
unsafe impl GlobalAlloc for HugePageAlloc {
    unsafe fn alloc(&self, layout: Layout) -> *mut u8 {
        // SAFETY: the caller upholds `GlobalAlloc::alloc`'s contract, passed on as is.
        let ptr = unsafe { System.alloc(layout) };
        Self::advise(ptr, layout.size());
        ptr
    }

    unsafe fn alloc_zeroed(&self, layout: Layout) -> *mut u8 {
        // SAFETY: as for `alloc`.
        let ptr = unsafe { System.alloc_zeroed(layout) };
        Self::advise(ptr, layout.size());
        ptr
    }

    unsafe fn dealloc(&self, ptr: *mut u8, layout: Layout) {
        // SAFETY: `ptr` came from `System` with this layout (every block of ours does).
        unsafe { System.dealloc(ptr, layout) }
    }

    unsafe fn realloc(&self, ptr: *mut u8, layout: Layout, new_size: usize) -> *mut u8 {
        // SAFETY: as for `dealloc`, and the caller upholds `realloc`'s contract.
        let new = unsafe { System.realloc(ptr, layout, new_size) };
        Self::advise(new, new_size);
        new
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn blocks_of_every_size_keep_their_contents() {
        let a = HugePageAlloc;
        for size in [1, 4095, HUGE_FROM - 1, HUGE_FROM, HUGE_FROM + 12345] {
            let layout = Layout::from_size_align(size, 8).expect("valid layout");
            // SAFETY: a non-zero size with a valid alignment; the block is written and
            // read within its bounds, then freed with the same layout.
            unsafe {
                let p = a.alloc_zeroed(layout);
                assert!(!p.is_null());
                assert!((0..size).step_by(997).all(|i| *p.add(i) == 0));
                p.write_bytes(7, size);
                let q = a.realloc(p, layout, size * 2);
                assert!(!q.is_null());
                assert!((0..size).step_by(997).all(|i| *q.add(i) == 7));
                a.dealloc(
                    q,
                    Layout::from_size_align(size * 2, 8).expect("valid layout"),
                );
            }
        }
    }
}
