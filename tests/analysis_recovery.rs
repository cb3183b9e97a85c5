//! G recovered from synthesized runs (no image stage): exactly without noise, and with a stated
//! uncertainty that covers the truth as often as a one-sigma interval should.

mod analysis_common;

use analysis_common::{exact_setup, run};
use spotlever::analysis::{analyze, AnalysisOptions};

fn quick() -> AnalysisOptions {
    AnalysisOptions {
        mc_draws: 100_000,
        ..Default::default()
    }
}

#[test]
fn noise_free_runs_recover_g_within_a_thousandth() {
    let setup = exact_setup();
    for (segments, with_events, drift) in [
        (5, true, 0.0),
        (5, false, 0.0),
        (4, true, 3e-10),
        (2, true, 0.0),
    ] {
        let r = run(segments, 3.0, 2.0, 0.0, drift, 1);
        let ev = with_events.then_some(r.events.as_slice());
        let a = analyze(&r.samples, &setup, ev, &quick()).unwrap();
        let rel = a.g.value / r.g_true - 1.0;
        eprintln!(
            "segments {segments} events {with_events} drift {drift}: G rel err {rel:.2e}, T0 {:.4} (true {:.4}), acc ratio {:?}",
            a.period.value, r.trajectory.truth.period0, a.acceleration.as_ref().map(|x| x.ratio_to_deflection.value)
        );
        assert!(rel.abs() < 1e-3, "G off by {rel:e}");
        let acc = a.acceleration.as_ref().expect("acceleration method ran");
        let rel_acc = acc.g.value / r.g_true - 1.0;
        assert!(rel_acc.abs() < 1e-3, "G by acceleration off by {rel_acc:e}");
    }
}
