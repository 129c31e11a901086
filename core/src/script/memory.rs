//! A memory budget for scripts: a counting global allocator the embedding program installs,
//! and the gauge the engine reads between operations.
//!
//! Rhai bounds the length of one string, one array and one map (counting strings nested in
//! arrays and maps), but not map keys, values curried into or captured by a function pointer,
//! the sum over variables, or custom types. Counting every heap byte of the process covers all
//! of them at once: the engine checks the count after every operation and stops the script
//! with an error naming the limit when it exceeds [`EngineLimits::max_memory_bytes`]
//! (crate::script::EngineLimits). One operation may at most double the largest value (a
//! copy), so the peak stays within about twice the budget.
//!
//! The budget is active only when the program installs [`CountingAllocator`] as its global
//! allocator (the `gapwise` binary does); without it the gauge reads nothing and only the
//! per-value limits apply.

use std::alloc::{GlobalAlloc, Layout, System};
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};

static ALLOCATED: AtomicUsize = AtomicUsize::new(0);
static INSTALLED: AtomicBool = AtomicBool::new(false);

/// The system allocator, counting the bytes in use. Install it in a binary with
/// `#[global_allocator] static ALLOC: CountingAllocator = CountingAllocator;`.
pub struct CountingAllocator;

// SAFETY: every call is forwarded unchanged to the system allocator; the counter is only
// bookkeeping and never affects the memory handed out.
unsafe impl GlobalAlloc for CountingAllocator {
    unsafe fn alloc(&self, layout: Layout) -> *mut u8 {
        let p = System.alloc(layout);
        if !p.is_null() {
            ALLOCATED.fetch_add(layout.size(), Ordering::Relaxed);
        }
        p
    }
    unsafe fn alloc_zeroed(&self, layout: Layout) -> *mut u8 {
        let p = System.alloc_zeroed(layout);
        if !p.is_null() {
            ALLOCATED.fetch_add(layout.size(), Ordering::Relaxed);
        }
        p
    }
    unsafe fn dealloc(&self, ptr: *mut u8, layout: Layout) {
        System.dealloc(ptr, layout);
        ALLOCATED.fetch_sub(layout.size(), Ordering::Relaxed);
    }
    unsafe fn realloc(&self, ptr: *mut u8, layout: Layout, new_size: usize) -> *mut u8 {
        let p = System.realloc(ptr, layout, new_size);
        if !p.is_null() {
            if new_size >= layout.size() {
                ALLOCATED.fetch_add(new_size - layout.size(), Ordering::Relaxed);
            } else {
                ALLOCATED.fetch_sub(layout.size() - new_size, Ordering::Relaxed);
            }
        }
        p
    }
}

impl CountingAllocator {
    /// Marks the allocator as installed, so that the engine enforces the memory budget. Call
    /// it once at start-up from the program whose `#[global_allocator]` this is; calling it
    /// without installing the allocator would make the gauge read zero (no budget).
    pub fn activate() {
        INSTALLED.store(true, Ordering::Relaxed);
    }
}

/// Heap bytes in use by the whole process, if [`CountingAllocator`] is installed and active.
pub fn allocated_bytes() -> Option<usize> {
    INSTALLED
        .load(Ordering::Relaxed)
        .then(|| ALLOCATED.load(Ordering::Relaxed))
}
