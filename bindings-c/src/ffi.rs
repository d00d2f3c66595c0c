//! Every raw pointer, cast and `unsafe` block of the crate, in one place.
//!
//! The exported functions in the other modules never touch a raw pointer:
//! they hand what C gave them to these helpers, which check for NULL,
//! alignment and length and return references, or a result code.
//!
//! The contract C callers keep (README, section "C ABI"): a non-NULL pointer
//! points at as many valid elements as its length says; the buffers of one
//! call do not overlap; a rule's memory stays in place and unmodified while
//! the rule is in use.
//!
//! ## Rule memory
//! A rule takes `CLOUT_RULE_HEADER_WORDS + members * attributes` words. The
//! header words hold a [`Slot`] (a tag that marks live rules, the heap size
//! when the library allocated it, and the core's `Rule`), placed at the
//! first address aligned for it; the `clout_rule` pointer points at the
//! Slot. The weight table fills the words after the header. The same layout
//! serves caller memory (`clout_rule_load`, no heap) and library memory
//! (`clout_rule_new`, allocated aligned for the Slot, so the Slot is first).

use core::mem::{align_of, size_of, MaybeUninit};
use core::ptr;
use core::slice;

#[cfg(feature = "alloc")]
use alloc::alloc::{alloc, dealloc, Layout};
#[cfg(feature = "std")]
use std::panic::{catch_unwind, AssertUnwindSafe};

use clout_core::{image, Rule};

use crate::status::clout_result;

/// Words reserved at the start of a rule's memory for its header; the
/// weights follow. A C program sizes static rule memory as
/// `CLOUT_RULE_HEADER_WORDS + members * attributes` `uint64_t`s.
pub const CLOUT_RULE_HEADER_WORDS: usize = 1024;

/// A loaded rule, as C sees it: an opaque type, only ever behind a pointer.
pub struct clout_rule {
    _private: [u8; 0],
}

/// Marks the header of a live rule ("clout\0rl").
const TAG: u64 = u64::from_le_bytes(*b"clout\0rl");

/// The start of a rule's memory.
#[repr(C)]
struct Slot {
    /// [`TAG`] while the rule is live; 0 after `clout_rule_free`.
    tag: u64,
    /// Words the library allocated for this rule; 0 for caller memory.
    heap_words: usize,
    /// The image's roster digest (`None` for a version-1 image).
    roster: Option<[u8; image::DIGEST_LEN]>,
    rule: Rule<SlotWeights>,
}

/// Bytes a Slot may have to skip to reach its alignment in `uint64_t` memory.
const ALIGN_SLACK: usize = align_of::<Slot>().saturating_sub(align_of::<u64>());
const _: () = assert!(size_of::<Slot>() + ALIGN_SLACK <= CLOUT_RULE_HEADER_WORDS * size_of::<u64>());

/// The weight table of a loaded rule: the words after its header.
pub(crate) struct SlotWeights {
    ptr: *const u64,
    len: usize,
}

impl AsRef<[u64]> for SlotWeights {
    fn as_ref(&self) -> &[u64] {
        // SAFETY: `place_rule` points `ptr` at `len` initialised words of the
        // memory that also holds this header, which the caller keeps in place
        // and unmodified while the rule is live.
        unsafe { slice::from_raw_parts(self.ptr, self.len) }
    }
}

/// The rule type every export works on.
pub(crate) type LoadedRule = Rule<SlotWeights>;

/// Runs an export's body and turns a panic into `CLOUT_RESULT_PANIC`, so no
/// unwind ever crosses into C.
#[cfg(feature = "std")]
pub(crate) fn guard(body: impl FnOnce() -> Result<(), clout_result>) -> clout_result {
    match catch_unwind(AssertUnwindSafe(body)) {
        Ok(Ok(())) => clout_result::Ok,
        Ok(Err(code)) => code,
        Err(_) => clout_result::Panic,
    }
}

/// Runs an export's body. Without `std` nothing unwinds: a panic (a bug in
/// the library) reaches [`panic`] below, which aborts.
#[cfg(not(feature = "std"))]
pub(crate) fn guard(body: impl FnOnce() -> Result<(), clout_result>) -> clout_result {
    match body() {
        Ok(()) => clout_result::Ok,
        Err(code) => code,
    }
}

/// The panic handler of `#![no_std]` builds: an internal bug stops the
/// program through the C library's `abort` (newlib's ends a semihosted run
/// with a failure status; a device's C library resets or halts). Firmware
/// builds use `panic = "abort"`, so nothing unwinds.
#[cfg(all(not(feature = "std"), not(test)))]
#[panic_handler]
fn panic(_: &core::panic::PanicInfo<'_>) -> ! {
    extern "C" {
        fn abort() -> !;
    }
    // SAFETY: `abort` takes nothing and never returns; every C library has it.
    unsafe { abort() }
}

/// Checks a pointer and length pair before a slice is made of them.
fn check_pointer<T>(ptr: *const T, len: usize) -> Result<(), clout_result> {
    if ptr.is_null() {
        return Err(clout_result::NullArgument);
    }
    if !ptr.is_aligned() {
        return Err(clout_result::Misaligned);
    }
    match len.checked_mul(size_of::<T>()) {
        Some(bytes) if bytes <= isize::MAX as usize => Ok(()),
        _ => Err(clout_result::LengthTooLarge),
    }
}

/// A caller's input buffer.
pub(crate) fn input<'a, T>(ptr: *const T, len: usize) -> Result<&'a [T], clout_result> {
    check_pointer(ptr, len)?;
    // SAFETY: non-NULL, aligned, and by the caller's contract `len` valid
    // elements that nothing writes during the call.
    Ok(unsafe { slice::from_raw_parts(ptr, len) })
}

/// A caller's output buffer, possibly uninitialised.
pub(crate) fn output<'a, T>(ptr: *mut T, len: usize) -> Result<&'a mut [MaybeUninit<T>], clout_result> {
    check_pointer(ptr, len)?;
    // SAFETY: as for `input`, and no other buffer of the call overlaps it;
    // MaybeUninit makes no claim about the current contents.
    Ok(unsafe { slice::from_raw_parts_mut(ptr.cast::<MaybeUninit<T>>(), len) })
}

/// A caller's out-parameter, possibly uninitialised.
pub(crate) fn out_param<'a, T>(ptr: *mut T) -> Result<&'a mut MaybeUninit<T>, clout_result> {
    check_pointer(ptr, 1)?;
    // SAFETY: non-NULL and aligned, one element by the caller's contract.
    Ok(unsafe { &mut *ptr.cast::<MaybeUninit<T>>() })
}

/// Writes `text` and a terminating NUL into a caller's `char` buffer and its
/// length (without the NUL) into `written`; nothing is written when the
/// buffer is too small.
pub(crate) fn write_text(
    text: &str,
    buf: *mut core::ffi::c_char,
    buf_len: usize,
    written: *mut usize,
) -> Result<(), clout_result> {
    let out = output(buf.cast::<u8>(), buf_len)?;
    let written = out_param(written)?;
    if out.len() <= text.len() {
        return Err(clout_result::BufferTooSmall);
    }
    for (slot, &b) in out.iter_mut().zip(text.as_bytes().iter().chain([0u8].iter())) {
        slot.write(b);
    }
    written.write(text.len());
    Ok(())
}

/// The rule behind a handle, after checking that it points at a live rule.
pub(crate) fn rule<'a>(handle: *const clout_rule) -> Result<&'a LoadedRule, clout_result> {
    Ok(&slot(handle)?.rule)
}

/// The roster digest of the rule behind a handle, if its image had one.
pub(crate) fn roster(handle: *const clout_rule) -> Result<Option<[u8; image::DIGEST_LEN]>, clout_result> {
    Ok(slot(handle)?.roster)
}

/// The Slot behind a handle, after checking that it is live.
fn slot<'a>(handle: *const clout_rule) -> Result<&'a Slot, clout_result> {
    let first = handle.cast::<u64>();
    check_pointer(first, 1)?;
    // SAFETY: a handle points at a Slot, whose first word is the tag;
    // reading it alone tells a live rule from zeroed or freed memory before
    // anything else is trusted.
    let tag = unsafe { first.read() };
    let slot = handle.cast::<Slot>();
    if tag != TAG || !slot.is_aligned() {
        return Err(clout_result::NotARule);
    }
    // SAFETY: the tag says `place_rule` wrote a whole Slot here.
    Ok(unsafe { &*slot })
}

/// Words of rule memory an image needs, after checking the image completely.
pub(crate) fn rule_words(image: &[u8]) -> Result<usize, clout_result> {
    let weights = image::weights_needed(image)?;
    // Members and attributes are within the core's limits, so this is far from overflow.
    Ok(CLOUT_RULE_HEADER_WORDS + weights)
}

/// Loads `image` into `mem_words` words of rule memory at `mem` and returns
/// the handle (which is `mem`). `heap_words` is non-zero only for memory the
/// library allocated.
fn place_rule(
    mem: *mut u64,
    mem_words: usize,
    image: &[u8],
    heap_words: usize,
) -> Result<*mut clout_rule, clout_result> {
    check_pointer(mem, mem_words)?;
    let total = rule_words(image)?;
    if mem_words < total {
        return Err(clout_result::BufferTooSmall);
    }
    let weights_len = total - CLOUT_RULE_HEADER_WORDS;
    // SAFETY: `mem` holds `mem_words >= total` words, checked above.
    let weights_ptr = unsafe { mem.add(CLOUT_RULE_HEADER_WORDS) };
    // SAFETY: the weight region lies inside the caller's memory; zeroing it
    // first makes every word initialised before a reference is made.
    let weights = unsafe {
        ptr::write_bytes(weights_ptr, 0, weights_len);
        slice::from_raw_parts_mut(weights_ptr, weights_len)
    };
    // SlotWeights points where `load_with` wrote the table: into this memory.
    let (rule, roster) = image::load_with_roster(image, weights, |table| SlotWeights {
        ptr: table.as_ptr(),
        len: table.len(),
    })?;
    let slot = Slot {
        tag: TAG,
        heap_words,
        roster,
        rule,
    };
    // At most ALIGN_SLACK bytes from the start, so the Slot stays inside the
    // header words (checked at compile time above).
    let skip = mem.align_offset(align_of::<Slot>());
    if skip.saturating_mul(size_of::<u64>()) > ALIGN_SLACK {
        return Err(clout_result::Misaligned);
    }
    // SAFETY: `skip` words into the caller's memory is aligned for Slot and
    // leaves room for it before the weights.
    let at = unsafe { mem.add(skip) }.cast::<Slot>();
    // SAFETY: as just said; the memory is the caller's to lend.
    unsafe { at.write(slot) };
    Ok(at.cast::<clout_rule>())
}

/// Loads `image` into caller memory.
pub(crate) fn load_into(
    mem: *mut u64,
    mem_words: usize,
    image: &[u8],
) -> Result<*const clout_rule, clout_result> {
    Ok(place_rule(mem, mem_words, image, 0)?.cast_const())
}

/// The heap layout of a rule of `words` words: aligned for its Slot, which
/// therefore starts the allocation.
#[cfg(feature = "alloc")]
fn heap_layout(words: usize) -> Result<Layout, clout_result> {
    let bytes = words
        .checked_mul(size_of::<u64>())
        .ok_or(clout_result::LengthTooLarge)?;
    Layout::from_size_align(bytes, align_of::<Slot>().max(align_of::<u64>()))
        .map_err(|_| clout_result::LengthTooLarge)
}

/// Loads `image` into memory the library allocates.
#[cfg(feature = "alloc")]
pub(crate) fn load_new(image: &[u8]) -> Result<*mut clout_rule, clout_result> {
    let words = rule_words(image)?;
    let layout = heap_layout(words)?;
    // SAFETY: the layout has a non-zero size (at least the header words).
    let mem = unsafe { alloc(layout) }.cast::<u64>();
    if mem.is_null() {
        return Err(clout_result::OutOfMemory);
    }
    place_rule(mem, words, image, words).inspect_err(|_| {
        // SAFETY: allocated just above with this layout and not handed out.
        unsafe { dealloc(mem.cast::<u8>(), layout) }
    })
}

/// Without the heap there is no library memory to load into.
#[cfg(not(feature = "alloc"))]
pub(crate) fn load_new(_: &[u8]) -> Result<*mut clout_rule, clout_result> {
    Err(clout_result::NotInBuild)
}

/// Frees a rule from `load_new`; NULL is fine, caller memory is refused.
pub(crate) fn free(handle: *mut clout_rule) -> Result<(), clout_result> {
    if handle.is_null() {
        return Ok(());
    }
    rule(handle)?;
    let slot = handle.cast::<Slot>();
    // SAFETY: `rule` checked that a live Slot is here.
    let words = unsafe { (*slot).heap_words };
    if words == 0 {
        return Err(clout_result::NotHeapRule);
    }
    free_heap(handle, words)
}

/// Frees the heap memory of a live rule of `words` words from `load_new`.
#[cfg(feature = "alloc")]
fn free_heap(handle: *mut clout_rule, words: usize) -> Result<(), clout_result> {
    let slot = handle.cast::<Slot>();
    let layout = heap_layout(words)?;
    // SAFETY: a non-zero heap size means `load_new` allocated this memory
    // with this layout, and the Slot (the handle) starts it; clearing the tag
    // first lets a later use of a stale handle be caught while the memory is
    // not yet reused.
    unsafe {
        (*slot).tag = 0;
        dealloc(handle.cast::<u8>(), layout);
    }
    Ok(())
}

/// Without the heap no rule has heap memory (`heap_words` is always 0).
#[cfg(not(feature = "alloc"))]
fn free_heap(_: *mut clout_rule, _: usize) -> Result<(), clout_result> {
    Err(clout_result::NotHeapRule)
}

/// A member index for C (member indices are below the core's 65,535 limit).
pub(crate) fn index_u32(i: usize) -> u32 {
    u32::try_from(i).unwrap_or(u32::MAX)
}

/// A C member index as a Rust index.
pub(crate) fn index_usize(i: u32) -> usize {
    i as usize
}

/// A count for C.
pub(crate) fn count_u32(n: usize) -> u32 {
    u32::try_from(n).unwrap_or(u32::MAX)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    #[cfg(feature = "std")]
    fn panics_become_a_code() {
        assert_eq!(guard(|| panic!("deliberate")), clout_result::Panic);
        assert_eq!(guard(|| Err(clout_result::NotARule)), clout_result::NotARule);
        assert_eq!(guard(|| Ok(())), clout_result::Ok);
    }

    #[test]
    fn pointers_are_checked() {
        let words = [0u64; 4];
        assert_eq!(
            input::<u64>(ptr::null(), 0).unwrap_err(),
            clout_result::NullArgument
        );
        let odd = words.as_ptr().cast::<u8>().wrapping_add(1).cast::<u64>();
        assert_eq!(input(odd, 1).unwrap_err(), clout_result::Misaligned);
        assert_eq!(
            input(words.as_ptr(), usize::MAX / 4).unwrap_err(),
            clout_result::LengthTooLarge
        );
        assert_eq!(input(words.as_ptr(), 4).unwrap(), &words);
        assert_eq!(rule(words.as_ptr().cast()).err(), Some(clout_result::NotARule));
    }
}
