//! The C ABI, the rule image and the Rust core decide random four-state
//! ballots identically: outcome, which conditions are met, and every
//! condition's yes, no and abstain sums.

use clout_c::{
    clout_decide_votes, clout_group_sums, clout_outcome, clout_result, clout_rule, clout_rule_free,
    clout_rule_new,
};
use clout_core::fixtures::{four_state_form, four_state_rule};
use clout_core::{decide_ballot, image, Ballot, Node, Rule, Vote};
use proptest::prelude::*;

const VOTES: [Vote; 4] = [Vote::Absent, Vote::Yes, Vote::No, Vote::Abstain];

fn rule_strategy() -> impl Strategy<Value = Rule<Vec<u64>>> {
    (
        2usize..=12,
        prop::collection::vec(0u64..50, 12),
        0usize..4,
        0u64..20,
    )
        .prop_map(|(n, seats, form, k)| {
            let seats = &seats[..n];
            let form = four_state_form(form, i128::from(k % (n as u64 + 1)) + 1);
            let plain = (Node::Any(2), seats.iter().sum::<u64>() / 3);
            four_state_rule(seats, form, Some(plain)).expect("valid rule")
        })
}

proptest! {
    #[test]
    fn c_image_and_core_agree(rule in rule_strategy(), codes in prop::collection::vec(0u8..4, 12)) {
        let n = rule.members();
        let bytes = image::encode(&rule);
        let mut handle: *mut clout_rule = std::ptr::null_mut();
        prop_assert_eq!(clout_rule_new(bytes.as_ptr(), bytes.len(), &mut handle), clout_result::Ok);
        let votes: Vec<u8> = codes[..n].to_vec();
        let mut sums = vec![clout_group_sums { yes: 0, no: 0, abstain: 0 }; rule.atoms().len()];
        let mut outcome = clout_outcome { passed: false, conditions: 0, met: 0 };
        let code = clout_decide_votes(handle, votes.as_ptr(), votes.len(), sums.as_mut_ptr(), sums.len(), &mut outcome);
        prop_assert_eq!(code, clout_result::Ok);
        prop_assert_eq!(clout_rule_free(handle), clout_result::Ok);

        let ballot = Ballot::<1>::from_votes(&votes.iter().map(|&v| VOTES[usize::from(v)]).collect::<Vec<_>>()).unwrap();
        let core = decide_ballot(&rule, &ballot).unwrap();
        let mut weights = vec![0u64; image::weights_needed(&bytes).unwrap()];
        let loaded = image::load(&bytes, &mut weights).unwrap();
        let from_image = decide_ballot(&loaded, &ballot).unwrap();
        prop_assert_eq!(&core, &from_image);
        prop_assert_eq!(outcome.passed, core.passed);
        for (k, t) in core.tallies.iter().enumerate() {
            prop_assert_eq!((sums[k].yes, sums[k].no, sums[k].abstain), (t.sum, t.no, t.abstain));
            prop_assert_eq!((outcome.met >> k) & 1 == 1, t.met);
        }
    }
}
