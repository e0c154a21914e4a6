//! `binodal watch` end to end: the demo readings of the invented Harrowgate Cold Store morning
//! played into the real server's alarm stream, with the demo rules.
//!
//! The expected events are the ones the demo scenario was scripted to produce
//! (`crates/cli/examples/harrowgate_cold_store.csv`, invented data): each of the five tags crosses
//! its rule's limit once and comes back once, one tag's gateway drops out for 40 s (stale time
//! 20 s), and the file carries one missing temperature, one resent old reading and two readings
//! flagged bad.

#[allow(dead_code)]
mod util;

use std::collections::BTreeMap;

use util::run;

fn example(name: &str) -> String {
    format!("{}/examples/{name}", env!("CARGO_MANIFEST_DIR"))
}

#[test]
fn the_demo_raises_and_clears_each_scripted_alarm_once() {
    let csv = example("harrowgate_cold_store.csv");
    let rules = example("harrowgate_cold_store.toml");
    let result = run(&[
        "--output",
        "json",
        "watch",
        &csv,
        "--rules",
        &rules,
        "--altitude",
        "85m",
    ]);
    let stdout = result.ok();
    let events: Vec<serde_json::Value> = stdout
        .lines()
        .map(|line| serde_json::from_str(line).expect("one JSON object per line"))
        .collect();
    let kind = |e: &serde_json::Value| e["kind"].as_str().unwrap_or_default().to_string();
    let tag = |e: &serde_json::Value| e["tag"].as_str().unwrap_or_default().to_string();

    assert_eq!(kind(&events[0]), "notice");
    assert!(
        events[0]["message"]
            .as_str()
            .is_some_and(|m| m.contains("advisory")),
        "the stream opens with the advisory notice: {}",
        events[0]
    );

    // Per tag, the sequence of alarm events.
    let mut alarms: BTreeMap<String, Vec<String>> = BTreeMap::new();
    for event in events
        .iter()
        .filter(|e| ["raised", "cleared"].contains(&kind(e).as_str()))
    {
        alarms.entry(tag(event)).or_default().push(kind(event));
    }
    for expected_tag in [
        "CH-2-CHWL",
        "CO2-RK2-GC",
        "CO2-RK2-SUC",
        "LPG-V1",
        "NH3-P101",
    ] {
        assert_eq!(
            alarms.get(expected_tag).map(Vec::as_slice),
            Some(["raised".to_string(), "cleared".to_string()].as_slice()),
            "{expected_tag}: {alarms:?}"
        );
    }
    assert_eq!(alarms.len(), 5, "{alarms:?}");

    let quality: Vec<(String, String)> = events
        .iter()
        .filter(|e| kind(e) == "quality")
        .map(|e| {
            (
                tag(e),
                e["quality_issue"].as_str().unwrap_or_default().to_string(),
            )
        })
        .collect();
    assert_eq!(
        quality,
        [
            ("CH-2-CHWL".to_string(), "temperature_missing".to_string()),
            (
                "CO2-RK2-SUC".to_string(),
                "timestamp_out_of_order".to_string()
            ),
            ("NH3-P101".to_string(), "bad_quality_flag".to_string()),
            ("NH3-P101".to_string(), "bad_quality_flag".to_string()),
        ]
    );
    let stale: Vec<String> = events
        .iter()
        .filter(|e| kind(e) == "stale" || kind(e) == "resumed")
        .map(|e| format!("{} {}", kind(e), tag(e)))
        .collect();
    assert_eq!(stale, ["stale LPG-V1", "resumed LPG-V1"]);
    assert!(
        result.stderr.contains("5 raised, 5 cleared"),
        "summary: {}",
        result.stderr
    );
}

#[test]
fn unreadable_rows_are_reported_and_the_exit_code_says_so() {
    let dir = util::scratch("watch");
    let path = dir.join("bad_rows.csv");
    std::fs::write(
        &path,
        "time,tag,fluid,pressure,temperature\n\
         2026-01-15T06:00:00Z,NH3-P101,R-717,0.3barg,-33C\n\
         2026-01-15T06:00:05Z,NH3-P101,,0.3,-33C\n",
    )
    .expect("write the readings");
    let result = run(&["watch", path.to_str().expect("utf-8 path")]);
    assert!(!result.status.success(), "a skipped row fails the run");
    assert!(
        result.stderr.contains("line 3: column `pressure`"),
        "{}",
        result.stderr
    );
    assert!(
        result.stderr.contains("1 rows skipped"),
        "{}",
        result.stderr
    );
}
