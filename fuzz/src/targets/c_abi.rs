//! Target `c_abi`: the exported `extern "C"` functions, called the way a C
//! program would, with fuzzed images, buffer lengths, NULL pointers and
//! misaligned memory.
//!
//! Input: a flag byte (image repairs as in `image_load`), a 2-byte image
//! length, the image, then bytes that drive the calls. Promises checked: no
//! call returns `CLOUT_RESULT_PANIC`; a failed call leaves its outputs as
//! they were; a loaded rule decides as the core decides the same image;
//! caller memory is refused by `clout_rule_free`.

use core::ffi::c_char;
use core::ptr;

use clout_c::*;
use clout_core::{image, Coalition};

use super::image_load::framed;
use super::reader::Reader;

const SENTINEL: u64 = 0x5A5A_5A5A_5A5A_5A5A;

fn ok(code: clout_result) -> bool {
    assert_ne!(code, clout_result::Panic, "a panic reached the C boundary");
    code == clout_result::Ok
}

/// A length near `exact`: too short, exact, longer, or zero.
fn length(r: &mut Reader<'_>, exact: usize) -> usize {
    match r.u8() % 8 {
        0 => 0,
        1 => exact.saturating_sub(1),
        2 => exact + 1 + usize::from(r.u8()),
        _ => exact,
    }
}

/// Runs one input.
pub fn run(data: &[u8]) {
    let mut r = Reader::new(data);
    let bytes = framed(&mut r);
    messages(&mut r);
    let core_ok = image::weights_needed(&bytes).is_ok();
    let checked = ok(clout_image_check(bytes.as_ptr(), bytes.len()));
    assert_eq!(checked, core_ok, "clout_image_check and the core disagree");
    if !bytes.is_empty() {
        ok(clout_image_check(bytes.as_ptr(), bytes.len() - 1));
    }
    assert_eq!(clout_image_check(ptr::null(), 0), clout_result::NullArgument);
    describe(&bytes, &mut r);
    let mut words = usize::MAX;
    let got_words = ok(clout_rule_words(bytes.as_ptr(), bytes.len(), &mut words));
    assert_eq!(got_words, checked);
    if !got_words {
        assert_eq!(words, usize::MAX, "clout_rule_words wrote on failure");
        let mut mem = vec![0u64; CLOUT_RULE_HEADER_WORDS + 64];
        let mut handle: *const clout_rule = ptr::null();
        let code = clout_rule_load(
            bytes.as_ptr(),
            bytes.len(),
            mem.as_mut_ptr(),
            mem.len(),
            &mut handle,
        );
        assert!(!ok(code) && handle.is_null());
        let mut owned: *mut clout_rule = ptr::null_mut();
        assert!(!ok(clout_rule_new(bytes.as_ptr(), bytes.len(), &mut owned)) && owned.is_null());
        return;
    }
    // Caller memory: too short, exact or longer, at an offset that may break alignment.
    let want = length(&mut r, words);
    let skew = usize::from(r.u8() % 3);
    let mut backing = vec![SENTINEL; want + 2];
    let mem: *mut u64 = if skew == 2 {
        backing.as_mut_ptr().cast::<u8>().wrapping_add(4).cast::<u64>()
    } else {
        backing.as_mut_ptr().wrapping_add(skew)
    };
    let mut handle: *const clout_rule = ptr::null();
    let loaded = ok(clout_rule_load(
        bytes.as_ptr(),
        bytes.len(),
        mem,
        want,
        &mut handle,
    ));
    assert_eq!(
        loaded,
        want >= words && skew != 2,
        "load with {want} of {words} words, skew {skew}"
    );
    if !loaded {
        assert!(handle.is_null(), "clout_rule_load wrote its handle on failure");
        return;
    }
    assert_eq!(clout_rule_free(handle.cast_mut()), clout_result::NotHeapRule);
    let mut heap: *mut clout_rule = ptr::null_mut();
    assert!(ok(clout_rule_new(bytes.as_ptr(), bytes.len(), &mut heap)));
    let mut weights = vec![0u64; image::weights_needed(&bytes).expect("checked")];
    let rule = image::load(&bytes, &mut weights).expect("checked");
    let mut sizes = clout_rule_sizes::default();
    assert!(ok(clout_rule_info(handle, &mut sizes)));
    assert_eq!(sizes.members as usize, rule.members());
    assert_eq!(sizes.conditions as usize, rule.atoms().len());
    for _ in 0..3 {
        if r.is_empty() {
            break;
        }
        let which = if r.u8() & 1 == 0 {
            handle
        } else {
            heap.cast_const()
        };
        calls(which, &rule, &mut r);
    }
    assert!(ok(clout_rule_free(heap)));
    assert!(ok(clout_rule_free(ptr::null_mut())));
    drop(backing);
}

fn messages(r: &mut Reader<'_>) {
    let code = u32::from(r.u8());
    let len = usize::from(r.u8());
    let mut buf = vec![0x55 as c_char; len + 1];
    let mut written = usize::MAX;
    let got = ok(clout_result_message(code, buf.as_mut_ptr(), len, &mut written));
    if got {
        assert!(written < len && buf[written] == 0);
    } else {
        assert_eq!(written, usize::MAX);
        assert!(
            buf.iter().all(|&c| c == 0x55 as c_char),
            "message written on failure"
        );
    }
}

fn describe(bytes: &[u8], r: &mut Reader<'_>) {
    let len = match r.u8() % 4 {
        0 => usize::from(r.u8()),
        _ => CLOUT_DESCRIPTION_MAX,
    };
    let mut text = vec![0x55 as c_char; len + 1];
    let mut written = usize::MAX;
    let code = clout_image_describe(bytes.as_ptr(), bytes.len(), text.as_mut_ptr(), len, &mut written);
    if ok(code) {
        assert!(written < len && text[written] == 0);
    } else {
        assert_eq!(written, usize::MAX, "describe wrote its length on failure");
        assert!(
            code != clout_result::BufferTooSmall || len < CLOUT_DESCRIPTION_MAX,
            "CLOUT_DESCRIPTION_MAX bytes must suffice"
        );
    }
}

/// Decides fuzzed ballots through every entry point and compares with the core.
fn calls(handle: *const clout_rule, rule: &clout_core::Rule<&[u64]>, r: &mut Reader<'_>) {
    let n = rule.members();
    let k = rule.atoms().len();
    let words_needed = n.div_ceil(64);
    let pattern_len = usize::from(r.u8() % 64) + 1;
    let pattern = r.bytes(pattern_len).to_vec();
    let pattern = if pattern.is_empty() { vec![0] } else { pattern };
    let mut words: Vec<u64> = (0..words_needed)
        .map(|w| {
            let b = pattern[w % pattern.len()];
            u64::from(b)
                .wrapping_mul(0x0101_0101_0101_0101)
                .rotate_left(w as u32)
        })
        .collect();
    if let Some(last) = words.last_mut() {
        if n % 64 != 0 && r.u8() & 3 != 0 {
            *last &= (1u64 << (n % 64)) - 1;
        }
    }
    let ballot_words = length(r, words_needed);
    words.resize(ballot_words.max(words.len()), 0);
    if ballot_words > words_needed && r.u8() & 1 == 1 {
        if let Some(w) = words.last_mut() {
            *w |= 1;
        }
    }
    let sums_len = length(r, k);
    let mut sums = vec![SENTINEL; sums_len + 1];
    let mut outcome = clout_outcome {
        passed: true,
        conditions: u32::MAX,
        met: SENTINEL,
    };
    let before = outcome;
    let code = clout_decide(
        handle,
        words.as_ptr(),
        ballot_words,
        sums.as_mut_ptr(),
        sums_len,
        &mut outcome,
    );
    let members: Vec<usize> = (0..n)
        .filter(|&i| words.get(i / 64).is_some_and(|w| w >> (i % 64) & 1 == 1))
        .collect();
    let valid_bits = words.iter().enumerate().all(|(w, &word)| {
        (0..64).all(|b| word >> b & 1 == 0 || (w * 64 + b < n && w < ballot_words.min(words.len())))
            || w >= ballot_words
    });
    let expect_ok = ballot_words >= words_needed && sums_len >= k && valid_bits;
    assert_eq!(ok(code), expect_ok, "clout_decide gave {code:?}");
    let core = Coalition::<1024>::from_members(&members)
        .ok()
        .and_then(|c| clout_core::decide(rule, &c).ok());
    if ok(code) {
        let core = core.as_ref().expect("the core decides what the C ABI decides");
        assert_eq!(outcome.passed, core.passed);
        assert_eq!(outcome.conditions as usize, k);
        for (s, t) in sums.iter().zip(&core.tallies) {
            assert_eq!(*s, t.sum);
        }
        assert_eq!(sums[sums_len], SENTINEL, "wrote past the sums");
    } else {
        assert_eq!(outcome, before, "clout_decide wrote its outcome on failure");
        assert!(
            sums.iter().all(|&s| s == SENTINEL),
            "clout_decide wrote sums on failure"
        );
    }
    // The same ballot as a member list, perhaps with a duplicate or an outsider.
    let mut list: Vec<u32> = members.iter().map(|&i| i as u32).collect();
    match r.u8() % 8 {
        0 => list.push(n as u32),
        1 if !list.is_empty() => list.push(list[0]),
        2 => list.push(u32::MAX),
        _ => {}
    }
    let mut out2 = before;
    let code = clout_decide_members(
        handle,
        list.as_ptr(),
        list.len(),
        sums.as_mut_ptr(),
        sums_len,
        &mut out2,
    );
    if ok(code) {
        assert_eq!(out2.passed, core.as_ref().expect("decided").passed);
    } else {
        assert_eq!(out2, before);
    }
    // Four-state votes.
    let votes_len = length(r, n);
    let votes: Vec<u8> = (0..votes_len).map(|i| pattern[i % pattern.len()] % 5).collect();
    let groups_len = length(r, k);
    let blank = clout_group_sums {
        yes: SENTINEL,
        no: SENTINEL,
        abstain: SENTINEL,
    };
    let mut groups = vec![blank; groups_len + 1];
    let mut out3 = before;
    let code = clout_decide_votes(
        handle,
        votes.as_ptr(),
        votes_len,
        groups.as_mut_ptr(),
        groups_len,
        &mut out3,
    );
    let votes_ok = votes_len == n && groups_len >= k && votes.iter().all(|&v| v < 4);
    assert_eq!(ok(code), votes_ok, "clout_decide_votes gave {code:?}");
    if !ok(code) {
        assert_eq!(out3, before);
        assert!(groups.iter().all(|g| *g == blank));
    }
    // Critical members.
    let crit_len = length(r, n);
    let mut crit = vec![u32::MAX; crit_len + 1];
    let mut count = usize::MAX;
    let code = clout_critical(
        handle,
        words.as_ptr(),
        ballot_words,
        crit.as_mut_ptr(),
        crit_len,
        &mut count,
    );
    if ok(code) {
        let c = Coalition::<1024>::from_members(&members).expect("fits");
        let core: Vec<u32> = clout_core::critical(rule, &c)
            .expect("core")
            .iter()
            .map(|i| i as u32)
            .collect();
        assert_eq!(&crit[..count], &core[..]);
    } else {
        assert_eq!(count, usize::MAX);
        assert!(crit.iter().all(|&c| c == u32::MAX));
    }
    // Power, when the planner says it is quick.
    let cheap = clout_core::planner::plan(rule, 2_000_000).is_ok();
    if n <= CLOUT_POWER_MAX_MEMBERS && cheap {
        let len = length(r, n);
        let mut swings = vec![SENTINEL; len + 1];
        let mut bz = vec![f64::NAN; len + 1];
        let mut ss = vec![f64::NAN; len + 1];
        let code = clout_power(handle, swings.as_mut_ptr(), bz.as_mut_ptr(), ss.as_mut_ptr(), len);
        if ok(code) {
            assert!(len >= n);
            assert_eq!(swings[n], SENTINEL);
            for i in 0..n {
                assert!((0.0..=1.0).contains(&bz[i]) && (0.0..=1.0 + 1e-9).contains(&ss[i]));
            }
        } else {
            assert!(swings.iter().all(|&s| s == SENTINEL));
        }
    }
}
