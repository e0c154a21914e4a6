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

    // With standard error closed by its reader the warning and the tally are lost, but the
    // skipped row still fails the run (exit 1, not a crash); without a bad row the same closed
    // output ends with success.
    let good = dir.join("good_rows.csv");
    std::fs::write(
        &good,
        "time,tag,fluid,pressure,temperature\n\
         2026-01-15T06:00:00Z,NH3-P101,R-717,0.3barg,-33C\n",
    )
    .expect("write the readings");
    for (file, code) in [(&path, 1), (&good, 0)] {
        let mut command = util::binodal();
        command
            .arg("--server")
            .arg(util::server_url())
            .args(["watch", file.to_str().expect("utf-8 path")]);
        let mut child = command.spawn().expect("start binodal");
        drop(child.stderr.take());
        let closed = util::finish(child);
        assert_eq!(
            closed.status.code(),
            Some(code),
            "{}: {}",
            file.display(),
            closed.stdout
        );
    }
}

/// Four readings of the ammonia pump suction NH3-P101 at 2 bar absolute, one a second from
/// 2026-01-15T06:00:00Z: subcooled by 6 K, by 1 K, by 1 K flagged bad, and by 6 K again. The
/// temperatures are set from the service's own saturation temperature at 2 bar (asked through
/// `binodal saturation`), so that the subcoolings are the script's values.
fn pump_readings() -> String {
    let saturation = run(&["--output", "json", "saturation", "R-717", "--at", "2bar"]).json();
    let tsat = util::number(&saturation, "saturation_temperature_k");
    format!(
        "time,tag,fluid,pressure,temperature,quality\n\
         # NH3-P101 suction, Harrowgate Cold Store (invented data)\n\
         2026-01-15T06:00:00Z,NH3-P101,R-717,2bar,{:.3}K,\n\
         2026-01-15T06:00:01Z,NH3-P101,,2bar,{:.3}K,\n\
         2026-01-15T06:00:02Z,NH3-P101,,2bar,{:.3}K,bad\n\
         2026-01-15T06:00:03Z,NH3-P101,,2bar,{:.3}K,good\n",
        tsat - 6.0,
        tsat - 1.0,
        tsat - 1.0,
        tsat - 6.0
    )
}

/// The rule of the standard-input tests: subcooling below 3 K with a 1 K deadband, no delays, so
/// that each reading's own subcooling decides (IEC 62682 / ISA-18.2 definitions of limit and
/// deadband, as in the server's `machine.rs`).
const PUMP_RULE: &str =
    "NH3-P101=minimum-subcooling,limit=3,deadband=1,on_delay_s=0,off_delay_s=0,priority=medium";

/// `binodal watch -` plays readings from standard input: the 1 K subcooling raises the alarm at
/// 06:00:01, the bad-quality reading is a quality event and not a phase alarm, and the 6 K reading
/// (past limit + deadband = 4 K) clears it at 06:00:03.
#[test]
fn readings_on_standard_input_raise_and_clear_the_alarm() {
    let input = pump_readings();
    let result = util::run_with_stdin(
        &["--output", "json", "watch", "-", "--rule", PUMP_RULE],
        &input,
    );
    let stdout = result.ok();
    let events: Vec<serde_json::Value> = stdout
        .lines()
        .map(|line| serde_json::from_str(line).expect("one JSON object per line"))
        .collect();
    let text = |e: &serde_json::Value, key: &str| e[key].as_str().unwrap_or_default().to_string();
    assert_eq!(text(&events[0], "kind"), "notice");
    assert!(
        text(&events[0], "message").contains("advisory"),
        "{}",
        events[0]
    );
    let tagged: Vec<(String, String, String)> = events
        .iter()
        .filter(|e| text(e, "kind") != "notice")
        .map(|e| (text(e, "kind"), text(e, "time"), text(e, "tag")))
        .collect();
    let expected = [
        ("raised", "2026-01-15T06:00:01Z"),
        ("quality", "2026-01-15T06:00:02Z"),
        ("cleared", "2026-01-15T06:00:03Z"),
    ];
    assert_eq!(
        tagged,
        expected
            .iter()
            .map(|(kind, time)| (kind.to_string(), time.to_string(), "NH3-P101".to_string()))
            .collect::<Vec<_>>(),
        "{stdout}"
    );
    let raised = events
        .iter()
        .find(|e| text(e, "kind") == "raised")
        .expect("raised");
    assert_eq!(text(raised, "transition"), "boiling");
    assert_eq!(text(raised, "priority"), "medium");
    assert_eq!(text(raised, "rule"), "minimum-subcooling");
    assert_eq!(raised["limit"].as_f64(), Some(3.0));
    // The temperature was written to 0.001 K: the subcooling is 1 K within that rounding.
    util::assert_close(
        util::number(raised, "value"),
        1.0,
        0.0005,
        "subcooling at 06:00:01",
        "the script's input",
    );
    let quality = events
        .iter()
        .find(|e| text(e, "kind") == "quality")
        .expect("quality");
    assert_eq!(text(quality, "quality_issue"), "bad_quality_flag");
    let cleared = events
        .iter()
        .find(|e| text(e, "kind") == "cleared")
        .expect("cleared");
    assert_eq!(cleared["limit"].as_f64(), Some(4.0), "limit plus deadband");
    assert!(
        result
            .stderr
            .contains("4 readings played: 1 raised, 1 cleared, 1 quality events"),
        "summary: {}",
        result.stderr
    );
    assert!(
        result.stderr.contains("Alarms are advisory"),
        "{}",
        result.stderr
    );
}

/// Without a file argument `binodal watch` reads standard input too; the table output prints one
/// line per event with its time and kind.
#[test]
fn without_a_file_watch_reads_standard_input() {
    let input = pump_readings();
    let result = util::run_with_stdin(&["watch", "--rule", PUMP_RULE], &input);
    let stdout = result.ok();
    let lines: Vec<&str> = stdout
        .lines()
        .filter(|line| line.starts_with("2026-"))
        .collect();
    assert_eq!(lines.len(), 3, "{stdout}");
    assert!(
        lines[0].starts_with("2026-01-15T06:00:01Z  RAISED"),
        "{stdout}"
    );
    assert!(lines[0].contains("NH3-P101"), "{stdout}");
    assert!(
        lines[1].starts_with("2026-01-15T06:00:02Z  QUALITY"),
        "{stdout}"
    );
    assert!(
        lines[2].starts_with("2026-01-15T06:00:03Z  CLEARED"),
        "{stdout}"
    );
    assert!(
        stdout
            .lines()
            .any(|line| line.starts_with("NOTICE") && line.contains("advisory")),
        "{stdout}"
    );
    assert!(
        result.stderr.contains("1 raised, 1 cleared"),
        "{}",
        result.stderr
    );
}

/// A replay factor so small that a few seconds of readings would take days is refused up front,
/// naming the option and its range.
#[test]
fn a_replay_speed_outside_its_range_is_refused() {
    let csv = example("harrowgate_cold_store.csv");
    for speed in ["1e-30", "0", "-1", "NaN"] {
        let result = run(&["watch", &csv, &format!("--speed={speed}")]);
        let stderr = result.failed();
        assert!(stderr.contains("--speed"), "{speed}: {stderr}");
        assert!(stderr.contains("0.001"), "{speed}: {stderr}");
    }
}
