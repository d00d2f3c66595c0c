//! Rule images as every front end writes them (`clout compile`, Python's
//! and JavaScript's `image()`): with the rule's and the members' names in
//! the roster section, and loaded back and compared with the rule before
//! they are handed out.

use clout_core::image;
use clout_dsl::{CompiledRule, RuleFile};

use crate::failure::Failure;

/// The image of `rule` (one of `file`'s rules) with its names.
pub fn named_image(file: &RuleFile, rule: &CompiledRule) -> Result<Vec<u8>, Failure> {
    let names: Vec<&str> = file.members.iter().map(|m| m.name.as_str()).collect();
    if names.len() != rule.rule.members() {
        return Err(Failure::input("internal: the rule's members are not the file's"));
    }
    let roster = image::Roster {
        rule: &rule.name,
        members: &names,
    };
    let bytes = image::encode_named(&rule.rule, &roster).map_err(|e| {
        Failure::input(e.to_string()).with_hint(format!(
            "images store names of at most {} bytes; shorten the longer names",
            image::MAX_NAME_LEN
        ))
    })?;
    // Read back what we are about to hand out: the device must see the same rule.
    let needed = image::weights_needed(&bytes).map_err(|e| Failure::input(format!("internal: {e}")))?;
    let mut weights = vec![0u64; needed];
    let loaded = image::load(&bytes, &mut weights).map_err(|e| Failure::input(format!("internal: {e}")))?;
    if loaded != rule.rule.as_borrowed() {
        return Err(Failure::input(
            "internal: the image does not load back to the same rule",
        ));
    }
    Ok(bytes)
}
