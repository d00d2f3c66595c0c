//! Analyses a fictional rule with the core alone: the Harbour Council of
//! Port Wend (five founding wards of 7 seats, ten neighbourhood seats of 1;
//! a motion needs 39 of 45 seats). All figures are exact.

use clout::{analyze, Count1024, Rule};

fn main() {
    let names = [
        "north ward",
        "east ward",
        "south ward",
        "west ward",
        "old town",
        "quay 1",
        "quay 2",
        "quay 3",
        "quay 4",
        "quay 5",
        "hill 1",
        "hill 2",
        "hill 3",
        "hill 4",
        "hill 5",
    ];
    let mut seats = vec![7u64; 5];
    seats.extend([1u64; 10]);
    let rule = match Rule::weighted(39, seats) {
        Ok(r) => r,
        Err(e) => {
            eprintln!("error: {e}");
            std::process::exit(2);
        }
    };
    let power = match analyze::<_, Count1024>(&rule) {
        Ok(p) => p,
        Err(e) => {
            eprintln!("error: {e}");
            std::process::exit(2);
        }
    };
    let t = power.table();
    println!("Harbour Council of Port Wend (fictional): [39; 7 x5, 1 x10]");
    println!(
        "engine: {} (estimated {} steps)\n",
        power.plan.engine.name(),
        power.plan.cost
    );
    println!(
        "{:<12} {:>5} {:>6} {:>8} {:>8} {:>14} {:>8} {:>13} {:>11}  flags",
        "member",
        "seats",
        "swings",
        "banzhaf",
        "penrose",
        "shapley_shubik",
        "johnston",
        "deegan_packel",
        "public_good"
    );
    for (i, name) in names.iter().enumerate() {
        let mut flags = Vec::new();
        if t.is_veto(i) {
            flags.push("veto");
        }
        if t.is_dummy(i) {
            flags.push("dummy");
        }
        if t.is_dictator(i) {
            flags.push("dictator");
        }
        println!(
            "{:<12} {:>5} {:>6} {:>8.5} {:>8.5} {:>14.5} {:>8.5} {:>13.5} {:>11.5}  {}",
            name,
            rule.weight(0, i),
            power.members[i].swings,
            t.banzhaf(i),
            t.penrose(i),
            t.shapley_shubik(i),
            t.johnston(i).unwrap_or(f64::NAN),
            t.deegan_packel(i).unwrap_or(f64::NAN),
            t.public_good(i).unwrap_or(f64::NAN),
            flags.join(",")
        );
    }
    let r = &power.rule;
    println!();
    println!("winning coalitions      {} of 2^{}", r.winning, r.members);
    println!("probability of passage  {:.6}", r.passage_probability());
    if let Some(m) = r.minimal_winning {
        println!("minimal winning         {m}");
    }
    if let Some(m) = r.minimal_blocking {
        println!("minimal blocking        {m}");
    }
    if let Some(s) = r.smallest_winning {
        println!("smallest winning size   {s}");
    }
    println!(
        "proper {} / strong {} / decisive {}",
        r.proper,
        r.strong,
        r.decisive()
    );
    println!();
    println!("Model: every member votes yes or no independently with equal chance; indices measure");
    println!("a priori power, not predicted behaviour. The legal outcome of a vote follows the governing");
    println!("instrument, applicable election law and certified counting procedures.");
}
