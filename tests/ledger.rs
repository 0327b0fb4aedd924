//! The look ledger: lines round-trip exactly, every kind of tampering is caught at the right
//! line, concurrent runs serialize through the lock, and setting a file aside overwrites
//! nothing. Hashes are recomputed here with `sha2` directly from the file's bytes, following the
//! line format's definition, rather than through surety's own helpers.

use sha2::{Digest, Sha256};
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use surety::ledger::{
    ArmLook, Entry, EntryKind, InputDigest, LEDGER_FORMAT, Ledger, LedgerErrorKind, LockedLedger,
};

fn sha(bytes: &[u8]) -> String {
    Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

const ZEROS: &str = "0000000000000000000000000000000000000000000000000000000000000000";

/// An unsealed entry of `kind` for `look`, keyed by `tag`.
fn entry(kind: EntryKind, look: u32, tag: &str, delta: f64) -> Entry {
    Entry {
        format: String::new(),
        seq: 0,
        kind,
        look,
        time: "2026-11-30T08:15:00Z".into(),
        key: sha(tag.as_bytes()),
        spec_sha256: sha(b"study.yaml"),
        inputs: vec![InputDigest {
            path: "picks.csv".into(),
            sha256: sha(tag.as_bytes()),
        }],
        arms: vec![ArmLook {
            name: "fw-4.2.0".into(),
            n: 4600,
            upper: Some(0.004223211),
            lower: None,
            verdict: "pass".into(),
        }],
        method: "exact".into(),
        guarantee: "fixed-n".into(),
        delta: 0.05,
        verdict: "pass".into(),
        delta_spent: delta,
        results_sha256: sha(b"results"),
        note: None,
        prev: String::new(),
        hash: String::new(),
    }
}

fn look(n: u32, tag: &str, delta: f64) -> Entry {
    entry(EntryKind::Look, n, tag, delta)
}

/// Seal entries one after another; the sealed entries and the file's bytes.
fn build(entries: Vec<Entry>) -> (Vec<Entry>, Vec<u8>) {
    let mut ledger = Ledger::default();
    let mut bytes = Vec::new();
    for e in entries {
        let (sealed, line) = ledger.seal(e);
        bytes.extend_from_slice(line.as_bytes());
        bytes.push(b'\n');
        ledger.entries.push(sealed);
    }
    (ledger.entries, bytes)
}

/// A three-line ledger: look 1, a re-issue of it, look 2.
fn three() -> (Vec<Entry>, Vec<u8>) {
    build(vec![
        look(1, "a", 0.05 / 3.0),
        entry(EntryKind::ReIssue, 1, "a", 0.0),
        look(2, "b", 0.05 / 3.0),
    ])
}

fn lines(bytes: &[u8]) -> Vec<Vec<u8>> {
    bytes
        .split_inclusive(|b| *b == b'\n')
        .map(<[u8]>::to_vec)
        .collect()
}

fn err_of(bytes: &[u8]) -> (LedgerErrorKind, Option<u64>, String) {
    match Ledger::parse(bytes) {
        Ok(l) => panic!("accepted a damaged ledger of {} lines", l.entries.len()),
        Err(e) => (e.kind, e.line, e.message),
    }
}

#[test]
fn three_lines_round_trip() {
    let (sealed, bytes) = three();
    let ledger = Ledger::parse(&bytes).unwrap();
    assert_eq!(ledger.entries, sealed);
    let text = lines(&bytes);
    assert_eq!(
        ledger.head(),
        sha(text[2].strip_suffix(b"\n").unwrap()),
        "head is the hash of the last line's bytes"
    );
    assert_eq!(ledger.next_look(), 3);
    assert_eq!(ledger.find_key(&sha(b"a")).unwrap().seq, 1);
    assert_eq!(ledger.find_key(&sha(b"b")).unwrap().look, 2);
    assert!(ledger.find_key(&sha(b"c")).is_none());
    let looks: Vec<u64> = ledger.looks().iter().map(|e| e.seq).collect();
    assert_eq!(looks, [1, 3], "the re-issue is not a look");
    assert_eq!(ledger.spent(), 2.0 * (0.05 / 3.0));
    assert_eq!(
        ledger.line_sha256(2).unwrap(),
        sha(&text[1][..text[1].len() - 1])
    );
    assert!(ledger.line_sha256(4).is_none());
}

#[test]
fn empty_ledger() {
    let ledger = Ledger::parse(b"").unwrap();
    assert!(ledger.entries.is_empty());
    assert_eq!(ledger.head(), ZEROS);
    assert_eq!(ledger.next_look(), 1);
    assert_eq!(ledger.spent(), 0.0);
    assert!(ledger.looks().is_empty());
}

/// The documented line format: keys in order, compact, `prev` and `hash` as defined.
#[test]
fn lines_follow_the_documented_format() {
    let (_, bytes) = three();
    let text = lines(&bytes);
    let keys = [
        "format",
        "seq",
        "kind",
        "look",
        "time",
        "key",
        "spec_sha256",
        "inputs",
        "arms",
        "method",
        "guarantee",
        "delta",
        "verdict",
        "delta_spent",
        "results_sha256",
        "note",
        "prev",
        "hash",
    ];
    for (i, raw) in text.iter().enumerate() {
        let line = std::str::from_utf8(raw)
            .unwrap()
            .strip_suffix('\n')
            .unwrap();
        assert!(
            line.starts_with(&format!(
                "{{\"format\":\"{LEDGER_FORMAT}\",\"seq\":{},\"kind\":",
                i + 1
            )),
            "{line}"
        );
        let mut at = 0;
        for key in keys {
            // Top-level keys appear in this order (nested `verdict` comes after `arms`' own).
            let found = line[at..]
                .find(&format!("\"{key}\":"))
                .unwrap_or_else(|| panic!("{key} missing or out of order in {line}"));
            at += found + 1;
        }
        assert!(
            !line.contains(": ") && !line.contains(", "),
            "compact: {line}"
        );
        // `hash` is the SHA-256 of the line with the hash value emptied.
        let hash = &line[line.len() - 66..line.len() - 2];
        let blank = line.replace(&format!("\"hash\":\"{hash}\""), "\"hash\":\"\"");
        assert_eq!(sha(blank.as_bytes()), hash);
        // `prev` is the SHA-256 of the previous line's bytes without its line end.
        let prev_expected = if i == 0 {
            ZEROS.to_string()
        } else {
            sha(&text[i - 1][..text[i - 1].len() - 1])
        };
        assert!(
            line.contains(&format!("\"prev\":\"{prev_expected}\"")),
            "{line}"
        );
    }
    assert!(
        std::str::from_utf8(&text[1])
            .unwrap()
            .contains("\"kind\":\"re-issue\"")
    );
}

#[test]
fn numbers_round_trip_bit_for_bit() {
    let values = [
        0.1,
        0.1 + 0.2,
        0.05 / 3.0,
        1e-300,
        5e-324, // the smallest subnormal
        f64::MIN_POSITIVE,
        1.0 - f64::EPSILON / 2.0,
        0.004223211_f64.next_up(),
        0.0,
        1.0,
    ];
    let entries: Vec<Entry> = values
        .iter()
        .enumerate()
        .map(|(i, &x)| {
            let mut e = look(i as u32 + 1, &format!("k{i}"), x);
            e.arms[0].upper = Some(x);
            e.arms[0].lower = Some(x / 7.0);
            e
        })
        .collect();
    let (sealed, bytes) = build(entries);
    let parsed = Ledger::parse(&bytes).unwrap();
    for (a, b) in sealed.iter().zip(&parsed.entries) {
        assert_eq!(a.delta_spent.to_bits(), b.delta_spent.to_bits());
        assert_eq!(
            a.arms[0].upper.unwrap().to_bits(),
            b.arms[0].upper.unwrap().to_bits()
        );
        assert_eq!(
            a.arms[0].lower.unwrap().to_bits(),
            b.arms[0].lower.unwrap().to_bits()
        );
    }
}

#[test]
fn spent_is_compensated() {
    // Python documentation, math.fsum: sum([.1]*10) is 0.9999999999999999, fsum gives 1.0.
    let (_, bytes) = build((1..=10).map(|n| look(n, &format!("k{n}"), 0.1)).collect());
    assert_eq!(Ledger::parse(&bytes).unwrap().spent(), 1.0);
}

#[test]
fn a_new_ledger_line_restarts_the_count() {
    let mut start = entry(EntryKind::NewLedger, 0, "restart", 0.0);
    start.note = Some("replaced study.ledger.replaced-1.jsonl".into());
    let (_, bytes) = build(vec![
        look(1, "a", 0.02),
        look(2, "b", 0.02),
        start,
        look(1, "a", 0.01),
    ]);
    let ledger = Ledger::parse(&bytes).unwrap();
    assert_eq!(ledger.next_look(), 2);
    assert_eq!(ledger.looks().len(), 1);
    assert_eq!(ledger.spent(), 0.01);
    assert_eq!(ledger.find_key(&sha(b"a")).unwrap().seq, 4);
    assert!(ledger.find_key(&sha(b"b")).is_none());
}

#[test]
fn any_flipped_byte_is_caught_on_its_line() {
    let (_, bytes) = three();
    let text = lines(&bytes);
    let patterns = [0x01u8, 0x02, 0x04, 0x08, 0x10, 0x20, 0x40, 0x80, 0xff];
    let mut start = 0;
    for (i, line) in text.iter().enumerate() {
        for pos in start..start + line.len() {
            for p in patterns {
                let mut damaged = bytes.clone();
                damaged[pos] ^= p;
                let (kind, at, message) = err_of(&damaged);
                assert_eq!(
                    at,
                    Some(i as u64 + 1),
                    "byte {pos} ^ {p:#04x} reported as {kind:?}: {message}"
                );
            }
        }
        start += line.len();
    }
}

#[test]
fn removed_swapped_duplicated_lines_are_caught() {
    let (_, bytes) = three();
    let t = lines(&bytes);
    let cases: [(&str, Vec<&Vec<u8>>, u64); 5] = [
        ("line 2 removed", vec![&t[0], &t[2]], 2),
        ("line 1 removed", vec![&t[1], &t[2]], 1),
        ("lines 2 and 3 swapped", vec![&t[0], &t[2], &t[1]], 2),
        ("line 2 duplicated", vec![&t[0], &t[1], &t[1], &t[2]], 3),
        ("line 3 duplicated", vec![&t[0], &t[1], &t[2], &t[2]], 4),
    ];
    for (what, order, line) in cases {
        let joined: Vec<u8> = order.into_iter().flatten().copied().collect();
        let (kind, at, message) = err_of(&joined);
        assert_eq!(
            (kind, at),
            (LedgerErrorKind::SeqGap, Some(line)),
            "{what}: {message}"
        );
        assert!(message.contains("--new-ledger"), "{message}");
    }
}

#[test]
fn cut_short_or_extended_files_are_caught() {
    let (_, bytes) = three();
    let len12 = lines(&bytes)[..2].iter().map(Vec::len).sum::<usize>();
    for cut in [len12 + 1, len12 + 40, bytes.len() - 1] {
        let (kind, at, _) = err_of(&bytes[..cut]);
        assert_eq!(
            (kind, at),
            (LedgerErrorKind::IncompleteLastLine, Some(3)),
            "cut at {cut}"
        );
    }
    let mut garbage = bytes.clone();
    garbage.extend_from_slice(b"hello\n");
    assert_eq!(err_of(&garbage).0, LedgerErrorKind::NotJson);
    assert_eq!(err_of(&garbage).1, Some(4));
    let mut blank = bytes.clone();
    blank.push(b'\n');
    assert_eq!(err_of(&blank).0, LedgerErrorKind::NotJson);
    let mut unterminated = bytes.clone();
    unterminated.extend_from_slice(b"{}");
    assert_eq!(
        (err_of(&unterminated).0, err_of(&unterminated).1),
        (LedgerErrorKind::IncompleteLastLine, Some(4))
    );
    let mut other_json = bytes.clone();
    other_json.extend_from_slice(b"{\"format\":\"surety-ledger/1\",\"seq\":4}\n");
    assert_eq!(err_of(&other_json).0, LedgerErrorKind::BadEntry);
}

#[test]
fn an_earlier_line_rewritten_and_rehashed_breaks_the_chain() {
    let (sealed, bytes) = three();
    let mut forged = sealed[0].clone();
    forged.verdict = "fail".into();
    // Sealing against an empty ledger gives a self-consistent line 1 with the edit.
    let (_, forged_line) = Ledger::default().seal(forged);
    let t = lines(&bytes);
    let mut damaged = forged_line.into_bytes();
    damaged.push(b'\n');
    damaged.extend_from_slice(&t[1]);
    damaged.extend_from_slice(&t[2]);
    let (kind, at, message) = err_of(&damaged);
    assert_eq!(
        (kind, at),
        (LedgerErrorKind::BrokenChain, Some(2)),
        "{message}"
    );
}

#[test]
fn another_format_is_named() {
    let (_, bytes) = three();
    let text = String::from_utf8(bytes).unwrap();
    let other = text.replacen(LEDGER_FORMAT, "surety-ledger/2", 1);
    let (kind, at, message) = err_of(other.as_bytes());
    assert_eq!((kind, at), (LedgerErrorKind::WrongFormat, Some(1)));
    assert!(message.contains("surety-ledger/2"), "{message}");
}

#[test]
fn inconsistent_looks_are_refused() {
    let cases: [(&str, Vec<Entry>); 6] = [
        ("first look numbered 2", vec![look(2, "a", 0.01)]),
        (
            "same key as an earlier look",
            vec![look(1, "a", 0.01), look(2, "a", 0.01)],
        ),
        (
            "re-issue of a missing look",
            vec![look(1, "a", 0.01), entry(EntryKind::ReIssue, 2, "a", 0.0)],
        ),
        (
            "re-issue under another key",
            vec![look(1, "a", 0.01), entry(EntryKind::ReIssue, 1, "b", 0.0)],
        ),
        (
            "re-issue spending δ",
            vec![look(1, "a", 0.01), entry(EntryKind::ReIssue, 1, "a", 0.01)],
        ),
        ("negative δ", vec![look(1, "a", -0.01)]),
    ];
    for (what, entries) in cases {
        let n = entries.len() as u64;
        let (_, bytes) = build(entries);
        let (kind, at, message) = err_of(&bytes);
        assert_eq!(
            (kind, at),
            (LedgerErrorKind::Inconsistent, Some(n)),
            "{what}: {message}"
        );
    }
}

fn append_look(path: &Path, tag: &str) {
    let mut file = LockedLedger::open(path).unwrap();
    let ledger = file.read().unwrap();
    let (_, line) = ledger.seal(look(ledger.next_look(), tag, 0.001));
    file.append(&line).unwrap();
}

#[test]
fn locked_appends_build_a_valid_ledger() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("study.ledger.jsonl");
    append_look(&path, "a");
    append_look(&path, "b");
    let ledger = Ledger::parse(&std::fs::read(&path).unwrap()).unwrap();
    assert_eq!(ledger.next_look(), 3);
    assert!(LockedLedger::lock_path(&path).exists());
    // An absent file reads as empty.
    let mut fresh = LockedLedger::open(&dir.path().join("other.jsonl")).unwrap();
    assert!(fresh.read().unwrap().entries.is_empty());
}

#[test]
fn eight_threads_append_in_turn() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("study.ledger.jsonl");
    std::thread::scope(|s| {
        for t in 0..8 {
            let path = &path;
            s.spawn(move || {
                for i in 0..20 {
                    append_look(path, &format!("thread {t} run {i}"));
                }
            });
        }
    });
    let ledger = Ledger::parse(&std::fs::read(&path).unwrap()).unwrap();
    assert_eq!(ledger.entries.len(), 160);
    let seqs: Vec<u64> = ledger.entries.iter().map(|e| e.seq).collect();
    assert_eq!(seqs, (1..=160).collect::<Vec<u64>>());
    assert_eq!(ledger.next_look(), 161);
}

const HELPER_PATH: &str = "SURETY_LEDGER_TEST_PATH";
const HELPER_TAG: &str = "SURETY_LEDGER_TEST_TAG";

/// Not a test of its own: `separate_processes_append_in_turn` runs the test binary again with
/// this function selected and the environment variables set.
#[test]
#[ignore = "helper process for separate_processes_append_in_turn"]
fn ledger_helper_process() {
    let (Ok(path), Ok(tag)) = (std::env::var(HELPER_PATH), std::env::var(HELPER_TAG)) else {
        return;
    };
    for i in 0..15 {
        append_look(Path::new(&path), &format!("{tag} run {i}"));
    }
}

#[test]
fn separate_processes_append_in_turn() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("study.ledger.jsonl");
    let exe = std::env::current_exe().unwrap();
    let children: Vec<_> = (0..3)
        .map(|p| {
            Command::new(&exe)
                .args([
                    "--exact",
                    "ledger::ledger_helper_process",
                    "--ignored",
                    "--quiet",
                ])
                .env(HELPER_PATH, &path)
                .env(HELPER_TAG, format!("process {p}"))
                .stdout(Stdio::null())
                .spawn()
                .unwrap()
        })
        .collect();
    for mut c in children {
        assert!(c.wait().unwrap().success());
    }
    let ledger = Ledger::parse(&std::fs::read(&path).unwrap()).unwrap();
    assert_eq!(ledger.entries.len(), 45);
}

#[test]
fn non_finite_numbers_are_never_written() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("study.ledger.jsonl");
    append_look(&path, "a");
    let before = std::fs::read(&path).unwrap();
    let mut bad_delta = look(2, "b", f64::NAN);
    bad_delta.delta_spent = f64::NAN;
    let mut bad_upper = look(2, "b", 0.01);
    bad_upper.arms[0].upper = Some(f64::INFINITY);
    let mut bad_lower = look(2, "b", 0.01);
    bad_lower.arms[0].lower = Some(f64::NAN);
    for e in [bad_delta, bad_upper, bad_lower] {
        let mut file = LockedLedger::open(&path).unwrap();
        let ledger = file.read().unwrap();
        let (_, line) = ledger.seal(e);
        let err = file.append(&line).unwrap_err();
        assert_eq!(err.kind, LedgerErrorKind::BadEntry, "{}", err.message);
    }
    assert_eq!(std::fs::read(&path).unwrap(), before);
}

#[test]
fn append_refuses_without_read_or_after_a_change() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("study.ledger.jsonl");
    append_look(&path, "a");
    let ledger = Ledger::parse(&std::fs::read(&path).unwrap()).unwrap();
    let (_, line) = ledger.seal(look(2, "b", 0.01));

    let mut unread = LockedLedger::open(&path).unwrap();
    assert_eq!(
        unread.append(&line).unwrap_err().kind,
        LedgerErrorKind::NotRead
    );
    drop(unread);

    let mut file = LockedLedger::open(&path).unwrap();
    file.read().unwrap();
    // Another program (not a surety run: the lock is advisory) writes meanwhile.
    let mut edited = std::fs::read(&path).unwrap();
    edited.extend_from_slice(b"x");
    std::fs::write(&path, &edited).unwrap();
    assert_eq!(
        file.append(&line).unwrap_err().kind,
        LedgerErrorKind::Changed
    );
    assert_eq!(std::fs::read(&path).unwrap(), edited);
    drop(file);

    // A line that does not follow the ledger is refused too.
    let mut file = LockedLedger::open(&path).unwrap();
    std::fs::write(&path, &edited[..edited.len() - 1]).unwrap();
    file.read().unwrap();
    let (_, wrong) = Ledger::default().seal(look(1, "c", 0.01));
    assert_eq!(
        file.append(&wrong).unwrap_err().kind,
        LedgerErrorKind::SeqGap
    );
    file.append(&line).unwrap();
    assert_eq!(
        Ledger::parse(&std::fs::read(&path).unwrap())
            .unwrap()
            .entries
            .len(),
        2
    );
}

#[test]
fn a_damaged_file_is_left_as_it_is() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("study.ledger.jsonl");
    let (_, bytes) = three();
    let cut = &bytes[..bytes.len() - 10];
    std::fs::write(&path, cut).unwrap();
    let mut file = LockedLedger::open(&path).unwrap();
    let err = file.read().unwrap_err();
    assert_eq!(
        (err.kind, err.line),
        (LedgerErrorKind::IncompleteLastLine, Some(3))
    );
    assert!(
        err.message.contains("study.ledger.jsonl"),
        "{}",
        err.message
    );
    let (_, line) = Ledger::default().seal(look(1, "z", 0.01));
    assert_eq!(
        file.append(&line).unwrap_err().kind,
        LedgerErrorKind::NotRead
    );
    drop(file);
    assert_eq!(std::fs::read(&path).unwrap(), cut);
}

fn replaced(dir: &Path, n: u32) -> PathBuf {
    dir.join(format!("study.ledger.replaced-{n}.jsonl"))
}

#[test]
fn set_aside_never_overwrites() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("study.ledger.jsonl");
    std::fs::write(replaced(dir.path(), 1), b"first").unwrap();
    std::fs::write(replaced(dir.path(), 2), b"second").unwrap();
    // A damaged ledger is exactly what gets set aside.
    let (_, bytes) = three();
    std::fs::write(&path, &bytes[..bytes.len() - 1]).unwrap();

    let mut file = LockedLedger::open(&path).unwrap();
    assert!(file.read().is_err());
    let (name, digest) = file.set_aside().unwrap().unwrap();
    assert_eq!(name, replaced(dir.path(), 3));
    assert_eq!(digest, sha(&bytes[..bytes.len() - 1]));
    let mut start = entry(EntryKind::NewLedger, 0, "new", 0.0);
    start.note = Some(format!("replaced {} sha256 {digest}", name.display()));
    let (_, line) = Ledger::default().seal(start);
    file.append(&line).unwrap();
    let ledger = file.read().unwrap();
    let (_, next) = ledger.seal(look(ledger.next_look(), "a", 0.01));
    file.append(&next).unwrap();
    drop(file);

    assert_eq!(std::fs::read(replaced(dir.path(), 1)).unwrap(), b"first");
    assert_eq!(std::fs::read(replaced(dir.path(), 2)).unwrap(), b"second");
    assert_eq!(std::fs::read(&name).unwrap(), &bytes[..bytes.len() - 1]);
    let ledger = Ledger::parse(&std::fs::read(&path).unwrap()).unwrap();
    assert_eq!(ledger.entries.len(), 2);
    assert_eq!(ledger.entries[0].kind, EntryKind::NewLedger);
    assert_eq!(ledger.looks().len(), 1);

    // Again: the next free name, and an empty ledger has nothing to set aside.
    let mut file = LockedLedger::open(&path).unwrap();
    let (name, _) = file.set_aside().unwrap().unwrap();
    assert_eq!(name, replaced(dir.path(), 4));
    assert_eq!(file.set_aside().unwrap(), None);
    assert!(file.read().unwrap().entries.is_empty());
}

/// A run waiting for the lock while another sets the ledger aside must end up in the new file.
#[test]
fn the_lock_outlives_set_aside() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("study.ledger.jsonl");
    append_look(&path, "old");
    let mut holder = LockedLedger::open(&path).unwrap();
    std::thread::scope(|s| {
        let waiter = s.spawn(|| append_look(&path, "waiter"));
        // Give the waiter time to block in `open`; correctness does not depend on it.
        std::thread::sleep(std::time::Duration::from_millis(100));
        let (name, _) = holder.set_aside().unwrap().unwrap();
        let (_, line) = Ledger::default().seal(entry(EntryKind::NewLedger, 0, "new", 0.0));
        holder.append(&line).unwrap();
        drop(holder);
        waiter.join().unwrap();
        let old = Ledger::parse(&std::fs::read(name).unwrap()).unwrap();
        assert_eq!(
            old.entries.len(),
            1,
            "nothing was added to the file set aside"
        );
    });
    let ledger = Ledger::parse(&std::fs::read(&path).unwrap()).unwrap();
    assert_eq!(ledger.entries.len(), 2);
    assert_eq!(ledger.looks()[0].key, sha(b"waiter"));
}
