//! The "Structure and motion" panel and the engine commands behind it: the analyses run while
//! the panel is open, reports arrive at least once a second while the run goes, both D
//! estimates are shown, Reset starts again from the present step, and each analysis exports
//! as the CSV a headless run writes.

mod support;

use egui_kittest::kittest::Queryable;
use noblescope::engine::{AnalysisFile, Command, EngineHandle, Event};
use std::time::{Duration, Instant};
use support::{harness, small_argon, step_until};

#[test]
fn the_panel_shows_live_analyses_updated_every_second_and_resets_by_hand() {
    let mut setup = small_argon();
    setup.equilibration_steps = 0;
    let mut h = harness(setup);
    step_until(&mut h, 20, "the engine starts", |a| a.atoms() == 500);
    h.get_by_label("Structure and motion").click();
    h.step();
    step_until(&mut h, 10, "a first report", |a| a.structure().report.is_some());
    h.key_press(egui::Key::Space);
    h.step();
    step_until(&mut h, 10, "the run goes", |a| a.engine_status().running);
    step_until(&mut h, 60, "D from both routes", |a| {
        a.structure()
            .report
            .as_ref()
            .is_some_and(|r| r.diffusion.is_some() && r.rdf_frames > 0)
    });
    assert!(h.query_by_label_contains("D (Einstein) =").is_some());
    assert!(h.query_by_label_contains("D (Green–Kubo) =").is_some());
    // Reports while running: at least one new one in every second.
    let mut changes = Vec::new();
    let mut last = h.state().structure().report.as_ref().unwrap().step;
    let start = Instant::now();
    while start.elapsed() < Duration::from_secs(3) {
        h.step();
        let step = h.state().structure().report.as_ref().unwrap().step;
        if step != last {
            changes.push(start.elapsed());
            last = step;
        }
        std::thread::sleep(Duration::from_millis(20));
    }
    assert!(changes.len() >= 3, "reports in 3 s: {changes:?}");
    assert!(
        changes
            .windows(2)
            .all(|w| w[1] - w[0] <= Duration::from_millis(1100)),
        "{changes:?}"
    );
    let before = h.state().structure().report.as_ref().unwrap().step;
    h.get_by_label("Reset analyses").click();
    step_until(&mut h, 10, "analyses started again", |a| {
        a.structure()
            .report
            .as_ref()
            .is_some_and(|r| r.from_step >= before)
    });
}

fn wait_for(h: &EngineHandle, secs: u64, want: impl Fn(&Event) -> bool) -> Option<Event> {
    let until = Instant::now() + Duration::from_secs(secs);
    while Instant::now() < until {
        if let Some(e) = h.next_event(Duration::from_millis(50))
            && want(&e)
        {
            return Some(e);
        }
    }
    None
}

#[test]
fn the_engine_exports_each_analysis_and_refuses_what_it_cannot_do() {
    let h = EngineHandle::spawn(small_argon()).unwrap();
    let refused = |e: &Event| matches!(e, Event::Rejected { .. });
    h.send(Command::ResetAnalyses);
    let e = wait_for(&h, 10, refused).expect("refused while off");
    assert!(format!("{e:?}").contains("analyses are off"), "{e:?}");
    h.send(Command::WatchAnalyses(true));
    h.send(Command::Run);
    wait_for(
        &h,
        30,
        |e| matches!(e, Event::Analyses(r) if r.dynamics_samples > 20 && r.speed_frames > 0),
    )
    .expect("analyses gathered");
    h.send(Command::SetFitWindow(Some([2.0, 1.0])));
    let e = wait_for(&h, 10, refused).expect("a reversed window is refused");
    assert!(
        format!("{e:?}").contains("fit window: [2, 1] τ is out of range; allowed: 0 ≤ from < to"),
        "{e:?}"
    );
    let dir = std::env::temp_dir().join(format!("noblescope-ui-structure-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    for (file, header) in [
        (AnalysisFile::Rdf, "r [sigma],r [angstrom],g [1],coordination [1]"),
        (
            AnalysisFile::Msd,
            "t [tau],t [ps],msd all [sigma^2],msd all [angstrom^2]",
        ),
        (AnalysisFile::Speeds, "species,v [sigma/tau],density [tau/sigma]"),
    ] {
        let path = dir.join(file.file_name());
        h.send(Command::SaveAnalysis {
            file,
            path: path.clone(),
        });
        wait_for(&h, 10, |e| matches!(e, Event::AnalysisSaved(p) if *p == path)).expect("saved");
        let text = std::fs::read_to_string(&path).unwrap();
        assert!(
            text.starts_with(header),
            "{}: {}",
            file.file_name(),
            text.lines().next().unwrap()
        );
        assert!(text.lines().count() > 10);
    }
    let _ = std::fs::remove_dir_all(&dir);
    h.send(Command::Shutdown);
}
