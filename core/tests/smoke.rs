use clout_core::*;

fn all(rule: &Rule<&[u64]>, engine: Engine) -> Analysis<Count1024> {
    analyze_with(rule, engine).unwrap()
}

#[test]
fn eec_1958() {
    let w = [4u64, 4, 4, 2, 2, 1];
    let r = Rule::weighted(12, &w[..]).unwrap();
    for e in [Engine::Enumerate, Engine::Profile, Engine::Dense] {
        let a = all(&r, e);
        let t = a.table();
        let s: Vec<String> = a.members.iter().map(|m| m.swings.to_string()).collect();
        println!(
            "{e:?} {s:?} {:?}",
            (0..6)
                .map(|i| (
                    t.banzhaf(i),
                    t.shapley_shubik(i),
                    t.johnston(i),
                    t.deegan_packel(i),
                    t.public_good(i)
                ))
                .collect::<Vec<_>>()
        );
        println!("{:?}", a.rule);
    }
}
