//! A small sweep from Rust: how much of the first day's rise after 2 L of
//! isotonic saline in a hypovolemic hyponatremia depends on body weight and
//! on how fast the volume-driven vasopressin falls away. The spec is YAML
//! text (the same format as `scenarios/sweeps/*.yaml`); members run on two
//! threads into a CSV, and the summary gives percentile bands and the
//! share of members crossing a guideline limit. The patient is invented.
//!
//! Run: `cargo run -p tidewater-engine --example small_sweep`
//!
//! Caution: a simulation for planning and teaching, not a medical device.
//! Defer to local protocols and licensed clinicians; re-measure sodium.

use tidewater::{Cause, Onset, Sex};

use tidewater::sweep::{run_sweep, PlanRunner, Shard, Summary, SweepSpec};
use tidewater::{Action, FluidLibrary, Patient, Plan, Stream};

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let fluids = FluidLibrary::bundled();
    let base = Plan::new(Patient {
        na: Some(118.0),
        onset: Some(Onset::Chronic),
        cause: Some(Cause::Hypovolemic),
        ..Patient::healthy(Sex::Male, 62.0, 70.0)
    })
    .run_for(24.0)
    .sample_every(0.5)
    .at(0.0, Action::Stop("habitual".into()))
    .start(0.0, Stream::give(fluids.get("saline_0_9")?, 2.0, 8.0)?);

    let spec = SweepSpec::from_yaml(
        "scenario: in-code\ndesign: latin_hypercube\nmembers: 40\nseed: 7\n\
         parameters:\n  - name: patient.weight_kg\n    range: [50, 90]\n  - name: volume_avp_threshold_fraction\n    range: [0.04, 0.11]\n\
         outputs:\n  na_at_h: [6, 24]\n  band_every_h: 6\n",
        "small_sweep.yaml",
    )?;
    let out =
        std::env::temp_dir().join(format!("tidewater-small-sweep-{}.csv", std::process::id()));
    let _ = std::fs::remove_file(&out);
    let n = run_sweep(
        &spec,
        24.0,
        &out,
        Shard::ALL,
        2,
        || Ok(PlanRunner { base: base.clone() }),
        &(),
    )?;
    let summary = Summary::from_file(&spec, &out)?;
    println!("Caution: a simulation for planning and teaching, not a medical device.");
    println!(
        "{n} members ({} failed) -> {}",
        summary.failed,
        out.display()
    );
    println!("time_h   p5    p25   p50   p75   p95 (serum sodium, mmol/L)");
    for (t, b) in summary.band_times_h.iter().zip(&summary.bands) {
        println!(
            "{t:6.1} {:5.1} {:5.1} {:5.1} {:5.1} {:5.1}",
            b[0], b[1], b[2], b[3], b[4]
        );
    }
    println!("share of members crossing a limit: {:.2}", summary.p_limit);
    for (name, rho) in &summary.sensitivity {
        println!("rank correlation of {name} with the largest 24 h rise: {rho:+.2}");
    }
    Ok(())
}
