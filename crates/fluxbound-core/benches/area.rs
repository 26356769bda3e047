//! Area assessment around the field kernel: what a grid of 1,000,000 cells
//! costs beyond the kernel's own time, and its peak heap.
//!
//! Run: `cargo bench --bench area`. Before divan's table it prints the peak
//! heap of one assessment of the 1,000,000-cell area (a counting global
//! allocator: the most bytes live at once, above what was live before).
//! The site has one 1 m conductor far from the area, so the kernel's work
//! (1,000,000 segment–point pairs) is small and the rest is the grid:
//! compare `assess_1m_cells` with `kernel_1m_points` (the same points
//! through the kernel alone).

use divan::{Bencher, black_box};
use fluxbound_core::assess::{self, LoadCase, Options};
use fluxbound_core::field;
use fluxbound_core::limits::{ReferenceTable, builtin_table};
use fluxbound_core::site::{Site, filaments, parse_site};
use std::alloc::{GlobalAlloc, Layout, System};
use std::sync::atomic::{AtomicUsize, Ordering};

/// The system allocator, counting the bytes live and their peak.
struct Counting;

static LIVE: AtomicUsize = AtomicUsize::new(0);
static PEAK: AtomicUsize = AtomicUsize::new(0);

// SAFETY: every call is forwarded unchanged to the system allocator; the
// counters only observe sizes.
unsafe impl GlobalAlloc for Counting {
    unsafe fn alloc(&self, layout: Layout) -> *mut u8 {
        let p = unsafe { System.alloc(layout) };
        if !p.is_null() {
            let now = LIVE.fetch_add(layout.size(), Ordering::Relaxed) + layout.size();
            PEAK.fetch_max(now, Ordering::Relaxed);
        }
        p
    }
    unsafe fn dealloc(&self, ptr: *mut u8, layout: Layout) {
        unsafe { System.dealloc(ptr, layout) };
        LIVE.fetch_sub(layout.size(), Ordering::Relaxed);
    }
    unsafe fn realloc(&self, ptr: *mut u8, layout: Layout, new_size: usize) -> *mut u8 {
        let p = unsafe { System.realloc(ptr, layout, new_size) };
        if !p.is_null() {
            if new_size >= layout.size() {
                let now = LIVE.fetch_add(new_size - layout.size(), Ordering::Relaxed) + new_size - layout.size();
                PEAK.fetch_max(now, Ordering::Relaxed);
            } else {
                LIVE.fetch_sub(layout.size() - new_size, Ordering::Relaxed);
            }
        }
        p
    }
}

#[global_allocator]
static ALLOC: Counting = Counting;

/// A 100 m × 100 m floor at 0.1 m spacing (1000 × 1000 cells) and one 1 m
/// conductor of 100 A, 20 m beside it at 3 m height (an invented hall).
fn site() -> Site {
    let doc = r#"{
        "frequency_hz": 50,
        "conductors": [{"id": "c", "current": {"rms_a": 100}, "radius_m": 0.01,
                        "path": [[-20, 50, 3], [-20, 51, 3]]}],
        "areas": [{"id": "floor", "polygon": [[0, 0], [100, 0], [100, 100], [0, 100]],
                   "height_m": 1, "spacing_m": 0.1}]
    }"#;
    parse_site(doc).expect("bench site")
}

fn tables() -> Vec<ReferenceTable> {
    vec![builtin_table("icnirp-2010-occupational").expect("built-in table").clone()]
}

fn main() {
    let (site, tables) = (site(), tables());
    let before = LIVE.load(Ordering::Relaxed);
    PEAK.store(before, Ordering::Relaxed);
    let a = assess::assess(&site, &LoadCase::Present, &tables, &Options::default()).expect("assessment");
    let peak = PEAK.load(Ordering::Relaxed) - before;
    eprintln!(
        "area of {} cells: peak heap during the assessment {:.1} MiB",
        a.areas[0].cells,
        peak as f64 / (1024.0 * 1024.0)
    );
    drop(a);
    divan::main();
}

/// The whole assessment of the 1,000,000-cell area.
#[divan::bench(sample_count = 10, sample_size = 1)]
fn assess_1m_cells(bencher: Bencher) {
    let (site, tables) = (site(), tables());
    bencher.bench(|| {
        black_box(assess::assess(black_box(&site), &LoadCase::Present, &tables, &Options::default()).expect("a"))
    });
}

/// The kernel alone on the same 1,000,000 cell centres.
#[divan::bench(sample_count = 10, sample_size = 1)]
fn kernel_1m_points(bencher: Bencher) {
    let site = site();
    let area = &site.areas()[0];
    let points = assess::area_grid(&area.polygon, area.height_m, area.spacing_m);
    let fil = filaments(site.conductors());
    let loads = LoadCase::Present.resolve(&site).expect("loads");
    let exc = site.excitation_at(&loads);
    bencher.bench(|| black_box(field::evaluate(black_box(&fil), black_box(&points), &exc).point_count()));
}
