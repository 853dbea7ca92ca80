//! Times `ambit::placement::place` on placement problems read from a JSON
//! file (a list of `PlacementProblem`s), for the side-by-side speed
//! comparison with scipy in `scripts/compare-placement-speed.py`.
//!
//! Prints, per problem, `{"objective", "net", "seconds"}` (best of 5 runs).

use std::time::Instant;

use ambit::placement::{PlacementConfig, PlacementProblem, place};

fn main() -> anyhow::Result<()> {
    let path = std::env::args()
        .nth(1)
        .ok_or_else(|| anyhow::anyhow!("usage: place_timing PROBLEMS.json"))?;
    let problems: Vec<PlacementProblem> = serde_json::from_slice(&std::fs::read(&path)?)?;
    let config = PlacementConfig::default();
    let mut results = Vec::new();
    for problem in &problems {
        let mut best = f64::INFINITY;
        let mut placement = None;
        for _ in 0..5 {
            let start = Instant::now();
            let solved = place(problem, &config)?;
            best = best.min(start.elapsed().as_secs_f64());
            placement = Some(solved);
        }
        let placement = placement.ok_or_else(|| anyhow::anyhow!("no run"))?;
        results.push(serde_json::json!({
            "objective": placement.objective,
            "net": placement.objective - placement.balance_penalty,
            "seconds": best,
        }));
    }
    println!("{}", serde_json::Value::Array(results));
    Ok(())
}
