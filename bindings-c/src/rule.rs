//! Checking images and loading rules: in caller memory (no heap) or in
//! memory the library allocates.

use core::ffi::c_char;
use core::fmt::{self, Write};
use core::mem::MaybeUninit;

use clout_core::image;

use crate::ffi::{self, clout_rule};
use crate::status::clout_result;

/// Longest description `clout_image_describe` writes, with its NUL.
pub const CLOUT_DESCRIPTION_MAX: usize = 512;

/// Sizes of a loaded rule.
#[repr(C)]
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct clout_rule_sizes {
    /// Members (ballot bits 0 .. members-1).
    pub members: u32,
    /// Weight attributes.
    pub attributes: u32,
    /// Conditions (threshold atoms): the number of sums a decision reports.
    pub conditions: u32,
    /// Formula nodes.
    pub nodes: u32,
}

/// Checks `image_len` bytes at `image` completely (every check a load
/// makes) without loading them. Returns `CLOUT_RESULT_OK` for an intact image,
/// else the first damage found.
#[no_mangle]
pub extern "C" fn clout_image_check(image: *const u8, image_len: usize) -> clout_result {
    ffi::guard(|| {
        image::weights_needed(ffi::input(image, image_len)?)?;
        Ok(())
    })
}

/// Writes a description of the image (sizes, checksum, and whether it is
/// intact or what is damaged) and a NUL into `text` (`text_len` bytes;
/// `CLOUT_DESCRIPTION_MAX` always suffices), and its length into
/// `*written`. Succeeds for damaged images too: the text says what is wrong.
#[no_mangle]
pub extern "C" fn clout_image_describe(
    image: *const u8,
    image_len: usize,
    text: *mut c_char,
    text_len: usize,
    written: *mut usize,
) -> clout_result {
    ffi::guard(|| {
        let bytes = ffi::input(image, image_len)?;
        let mut line = Line::default();
        // Line never fails: it stops at its capacity, which the longest
        // description does not reach.
        let _ = match image::inspect(bytes) {
            Ok(info) => write!(line, "{info}"),
            Err(e) => write!(line, "unreadable: {e}"),
        };
        ffi::write_text(line.as_str(), text, text_len, written)
    })
}

/// Writes into `*words` how many `uint64_t` of rule memory
/// `clout_rule_load` needs for this image: `CLOUT_RULE_HEADER_WORDS +
/// members * attributes`. Checks the image completely first.
#[no_mangle]
pub extern "C" fn clout_rule_words(image: *const u8, image_len: usize, words: *mut usize) -> clout_result {
    ffi::guard(|| {
        let bytes = ffi::input(image, image_len)?;
        let out = ffi::out_param(words)?;
        out.write(ffi::rule_words(bytes)?);
        Ok(())
    })
}

/// Loads an image into caller memory: `mem_words` `uint64_t`s at `mem`, at
/// least what `clout_rule_words` says. No heap is used. On success `*rule`
/// points into `mem`, which must then stay in place and unmodified while the
/// rule is used; there is nothing to free beyond `mem` itself. The image
/// bytes are no longer needed after the call.
#[no_mangle]
pub extern "C" fn clout_rule_load(
    image: *const u8,
    image_len: usize,
    mem: *mut u64,
    mem_words: usize,
    rule: *mut *const clout_rule,
) -> clout_result {
    ffi::guard(|| {
        let bytes = ffi::input(image, image_len)?;
        let out = ffi::out_param(rule)?;
        out.write(ffi::load_into(mem, mem_words, bytes)?);
        Ok(())
    })
}

/// Loads an image into memory the library allocates; release it with
/// `clout_rule_free`. The image bytes are no longer needed after the call.
/// A build without the heap returns `CLOUT_RESULT_NOT_IN_BUILD`.
#[no_mangle]
pub extern "C" fn clout_rule_new(
    image: *const u8,
    image_len: usize,
    rule: *mut *mut clout_rule,
) -> clout_result {
    ffi::guard(|| {
        let bytes = ffi::input(image, image_len)?;
        let out = ffi::out_param(rule)?;
        out.write(ffi::load_new(bytes)?);
        Ok(())
    })
}

/// Frees a rule from `clout_rule_new`. NULL is fine and does nothing; a rule
/// from `clout_rule_load` is refused with `CLOUT_RESULT_NOT_HEAP_RULE`.
#[no_mangle]
pub extern "C" fn clout_rule_free(rule: *mut clout_rule) -> clout_result {
    ffi::guard(|| ffi::free(rule))
}

/// Bytes of a roster digest (SHA-256 of the ordered member names and
/// weights; docs/image-format.md).
pub const CLOUT_ROSTER_DIGEST_LEN: usize = 32;
const _: () = assert!(CLOUT_ROSTER_DIGEST_LEN == image::DIGEST_LEN);

/// Writes the roster digest of an image (`CLOUT_ROSTER_DIGEST_LEN` bytes)
/// into `digest` (`digest_len` at least that), after checking the image
/// completely. A device that knows the digest of the roster it serves
/// compares the two and refuses an image compiled for another roster.
/// A version-1 image has none: `CLOUT_RESULT_IMAGE_NO_ROSTER`.
#[no_mangle]
pub extern "C" fn clout_image_roster_digest(
    image: *const u8,
    image_len: usize,
    digest: *mut u8,
    digest_len: usize,
) -> clout_result {
    ffi::guard(|| {
        let bytes = ffi::input(image, image_len)?;
        let out = ffi::output(digest, digest_len)?;
        let found = image::roster(bytes)?.map(|r| r.digest);
        write_digest(found, out)
    })
}

/// Writes the roster digest of the image a rule was loaded from, as
/// `clout_image_roster_digest` does.
#[no_mangle]
pub extern "C" fn clout_rule_roster_digest(
    rule: *const clout_rule,
    digest: *mut u8,
    digest_len: usize,
) -> clout_result {
    ffi::guard(|| {
        let found = ffi::roster(rule)?;
        write_digest(found, ffi::output(digest, digest_len)?)
    })
}

fn write_digest(
    found: Option<[u8; CLOUT_ROSTER_DIGEST_LEN]>,
    out: &mut [MaybeUninit<u8>],
) -> Result<(), clout_result> {
    let digest = found.ok_or(clout_result::ImageNoRoster)?;
    let out = out
        .get_mut(..CLOUT_ROSTER_DIGEST_LEN)
        .ok_or(clout_result::BufferTooSmall)?;
    for (slot, &b) in out.iter_mut().zip(digest.iter()) {
        slot.write(b);
    }
    Ok(())
}

/// Writes the sizes of a loaded rule into `*sizes`.
#[no_mangle]
pub extern "C" fn clout_rule_info(rule: *const clout_rule, sizes: *mut clout_rule_sizes) -> clout_result {
    ffi::guard(|| {
        let rule = ffi::rule(rule)?;
        let out = ffi::out_param(sizes)?;
        out.write(clout_rule_sizes {
            members: ffi::count_u32(rule.members()),
            attributes: ffi::count_u32(rule.attributes()),
            conditions: ffi::count_u32(rule.atoms().len()),
            nodes: ffi::count_u32(rule.formula().len()),
        });
        Ok(())
    })
}

/// Text formatted on the stack, so describing an image needs no heap.
struct Line {
    buf: [u8; CLOUT_DESCRIPTION_MAX - 1],
    len: usize,
}

impl Default for Line {
    fn default() -> Self {
        Line {
            buf: [0; CLOUT_DESCRIPTION_MAX - 1],
            len: 0,
        }
    }
}

impl Line {
    fn as_str(&self) -> &str {
        // Only whole `str`s are ever copied in, so this is valid UTF-8.
        core::str::from_utf8(&self.buf[..self.len]).unwrap_or("")
    }
}

impl Write for Line {
    fn write_str(&mut self, s: &str) -> fmt::Result {
        let end = self.len + s.len();
        let dst = self.buf.get_mut(self.len..end).ok_or(fmt::Error)?;
        dst.copy_from_slice(s.as_bytes());
        self.len = end;
        Ok(())
    }
}
