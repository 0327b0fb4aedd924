//! Reading the attachments back out of report PDFs (`surety verify report.pdf`).
//!
//! Sources of the expected values: the fixture report below and the bytes it was made from;
//! pikepdf (qpdf) as an independent PDF reader, through tests/reference/pdf_structure.py and
//! tests/reference/pdf_variants.py; `qpdf --check`; and PDFs written by the small writer in this
//! file, whose expected contents are the bytes put in.

use std::path::Path;

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use serde_json::Value;
use sha2::{Digest, Sha256};
use surety::report::extract::{EmbeddedFile, ExtractError, attachments, embedded_files};

use crate::python;

/// `surety run examples/release-signoff/study.yaml` by surety 0.1.0 (typst-pdf 0.15.1,
/// PDF/A-3b), and the results.json written beside it in the same run.
const REPORT: &[u8] = include_bytes!("data/report-release-signoff.pdf");
const RESULTS: &[u8] = include_bytes!("data/report-release-signoff.results.json");
/// The spec that run read, attached to the report byte for byte.
const SPEC: &[u8] = include_bytes!("../examples/release-signoff/study.yaml");

fn sha256(data: &[u8]) -> String {
    Sha256::digest(data)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

fn names_and_hashes(files: &[(String, Vec<u8>)]) -> Vec<(String, String)> {
    files.iter().map(|(n, d)| (n.clone(), sha256(d))).collect()
}

// ---------------------------------------------------------------- the report itself

#[test]
fn report_carries_its_spec_and_results() {
    let files = embedded_files(REPORT).unwrap_or_else(|e| panic!("{e}"));
    // Names, order, MIME types, relationships and descriptions are those of the two
    // `pdf.attach` calls in templates/report.typ.j2 (the name tree is sorted by name).
    let expected = [
        EmbeddedFile {
            name: "results.json".into(),
            data: RESULTS.to_vec(),
            mime_type: Some("application/json".into()),
            relationship: Some("Data".into()),
            description: Some(
                "Results of this look (surety results format 1), as shown in this report".into(),
            ),
        },
        EmbeddedFile {
            name: "study.yaml".into(),
            data: SPEC.to_vec(),
            mime_type: Some("application/yaml".into()),
            relationship: Some("Source".into()),
            description: Some("Study spec the results were computed from (byte for byte)".into()),
        },
    ];
    assert_eq!(files, expected);
    let simple = attachments(REPORT).expect("readable");
    assert_eq!(
        simple,
        vec![
            ("results.json".to_owned(), RESULTS.to_vec()),
            ("study.yaml".to_owned(), SPEC.to_vec())
        ]
    );
}

/// Compares what pikepdf sees in a report PDF with what surety put in: the attachments (names
/// and SHA-256), PDF/A-3b identification, the output intent, and XMP metadata derived from
/// the results (`#set document(title: id + " — " + title, author: owner)` in the template;
/// the creator tool `surety <version>` set in report/pdf.rs). For the main test suite, call it
/// on a freshly written report. Returns `false` when pikepdf is not available (skipped).
pub(crate) fn check_report_structure(
    pdf: &Path,
    results_json: &[u8],
    spec_name: &str,
    spec: &[u8],
    data: &[(&str, &[u8])],
) -> bool {
    let Some(out) = python::run("pdf_structure.py", &[pdf.as_os_str()]) else {
        return false;
    };
    let seen: Value = serde_json::from_slice(&out.stdout).expect("JSON from pdf_structure.py");
    let results: Value = serde_json::from_slice(results_json).expect("results JSON");
    let files: Vec<(String, String)> = seen["embedded_files"]
        .as_array()
        .expect("list")
        .iter()
        .map(|f| {
            (
                f["name"].as_str().unwrap_or_default().to_owned(),
                f["sha256"].as_str().unwrap_or_default().to_owned(),
            )
        })
        .collect();
    let mut expected = vec![
        ("results.json".to_owned(), sha256(results_json)),
        (spec_name.to_owned(), sha256(spec)),
    ];
    expected.extend(data.iter().map(|(n, b)| ((*n).to_owned(), sha256(b))));
    expected.sort();
    assert_eq!(files, expected, "attachments seen by pikepdf");
    let bytes = std::fs::read(pdf).expect("read PDF");
    let ours = attachments(&bytes).expect("surety reads the report");
    assert_eq!(
        names_and_hashes(&ours),
        files,
        "surety and pikepdf disagree"
    );
    assert_eq!(
        seen["af"],
        serde_json::json!(files.iter().map(|f| &f.0).collect::<Vec<_>>())
    );
    assert_eq!(
        seen["pdfa"],
        serde_json::json!({"part": "3", "conformance": "B"})
    );
    assert_eq!(seen["output_intent"], true);
    let study = &results["study"];
    let title = format!(
        "{} — {}",
        study["id"].as_str().unwrap_or_default(),
        study["title"].as_str().unwrap_or_default()
    );
    assert_eq!(seen["xmp"]["title"], title.as_str());
    assert_eq!(seen["info"]["Title"], title.as_str());
    match study["owner"].as_str() {
        Some(owner) => assert_eq!(seen["xmp"]["creators"], serde_json::json!([owner])),
        None => assert_eq!(seen["xmp"]["creators"], Value::Null),
    }
    let tool = format!(
        "surety {}",
        results["tool"]["version"].as_str().unwrap_or_default()
    );
    assert_eq!(seen["xmp"]["creator_tool"], tool.as_str());
    assert_eq!(seen["info"]["Creator"], tool.as_str());
    // The document id is the same in the XMP packet and the trailer.
    assert!(seen["xmp"]["document_id"].is_string());
    assert_eq!(seen["xmp"]["document_id"], seen["trailer_id"][0]);
    assert_eq!(seen["problems"], serde_json::json!([]));
    true
}

#[test]
fn pikepdf_sees_what_surety_put_in() {
    let dir = tempfile::tempdir().expect("tempdir");
    let path = dir.path().join("report.pdf");
    std::fs::write(&path, REPORT).expect("write");
    check_report_structure(&path, RESULTS, "study.yaml", SPEC, &[]);
}

#[test]
fn report_passes_qpdf_check() {
    let dir = tempfile::tempdir().expect("tempdir");
    let mut files = vec![("report.pdf", REPORT.to_vec())];
    files.push((
        "handmade-table.pdf",
        handmade(&sample_files(), Layout::Table),
    ));
    files.push((
        "handmade-streams.pdf",
        handmade(&sample_files(), Layout::ObjectStreams),
    ));
    for (name, bytes) in files {
        let path = dir.path().join(name);
        std::fs::write(&path, bytes).expect("write");
        match std::process::Command::new("qpdf")
            .arg("--check")
            .arg(&path)
            .output()
        {
            Ok(out) => assert!(
                out.status.success(),
                "qpdf --check {name}:\n{}{}",
                String::from_utf8_lossy(&out.stdout),
                String::from_utf8_lossy(&out.stderr)
            ),
            Err(e) => {
                assert!(
                    std::env::var("SURETY_REQUIRE_REFERENCE").as_deref() != Ok("1"),
                    "qpdf required but not available: {e}"
                );
                python::loud(&format!(
                    "*** SKIPPED qpdf --check: cannot run qpdf ({e}); install qpdf"
                ));
                return;
            }
        }
    }
}

// ---------------------------------------------------------------- other writers' structures

#[test]
fn variants_written_by_qpdf_read_like_pikepdf_reads_them() {
    let dir = tempfile::tempdir().expect("tempdir");
    let source = dir.path().join("report.pdf");
    std::fs::write(&source, REPORT).expect("write");
    let outdir = dir.path().join("variants");
    let Some(out) = python::run("pdf_variants.py", &[source.as_os_str(), outdir.as_os_str()])
    else {
        return;
    };
    let made: Value = serde_json::from_slice(&out.stdout).expect("JSON list");
    let made = made.as_array().expect("list");
    assert!(made.len() >= 7, "{made:?}");
    let original = names_and_hashes(&attachments(REPORT).expect("readable"));
    for v in made {
        let kind = v["kind"].as_str().unwrap_or_default();
        let path = Path::new(v["file"].as_str().unwrap_or_default());
        let bytes = std::fs::read(path).expect("variant");
        let ours = attachments(&bytes);
        if v["encrypted"] == true {
            assert_eq!(ours, Err(ExtractError::Encrypted), "{kind}");
            continue;
        }
        let ours = names_and_hashes(&ours.unwrap_or_else(|e| panic!("{kind}: {e}")));
        let Some(seen) = python::run("pdf_structure.py", &[path.as_os_str()]) else {
            return;
        };
        let seen: Value = serde_json::from_slice(&seen.stdout).expect("JSON");
        let theirs: Vec<(String, String)> = seen["embedded_files"]
            .as_array()
            .expect("list")
            .iter()
            .map(|f| {
                (
                    f["name"].as_str().unwrap_or_default().to_owned(),
                    f["sha256"].as_str().unwrap_or_default().to_owned(),
                )
            })
            .collect();
        assert_eq!(ours, theirs, "{kind}: surety and pikepdf disagree");
        match kind {
            "many-names" => {
                // 40 names across a split name tree, one spelling every character that
                // PDFDocEncoding places outside Latin-1 (as qpdf writes it).
                assert_eq!(ours.len(), 40, "{kind}");
                assert!(
                    ours.iter().any(|(n, _)| n.starts_with("pdfdoc ˘ˇˆ˙˝˛˚˜•")),
                    "{kind}"
                );
            }
            "filters" => {
                assert_eq!(ours.len(), 4, "{kind}");
                for f in &original {
                    assert!(ours.contains(f), "{kind} lost {f:?}");
                }
            }
            _ => assert_eq!(ours, original, "{kind}"),
        }
    }
}

/// The object number of the first object whose dictionary contains `marker`.
fn object_with(pdf: &[u8], marker: &[u8]) -> u32 {
    let at = pdf
        .windows(marker.len())
        .position(|w| w == marker)
        .expect("marker");
    let head = &pdf[..at];
    let obj = head
        .windows(6)
        .rposition(|w| w == b" 0 obj")
        .expect("object header");
    let start = head[..obj]
        .iter()
        .rposition(|b| !b.is_ascii_digit())
        .map_or(0, |i| i + 1);
    std::str::from_utf8(&head[start..obj])
        .expect("digits")
        .parse()
        .expect("number")
}

fn startxref(pdf: &[u8]) -> usize {
    let at = pdf
        .windows(9)
        .rposition(|w| w == b"startxref")
        .expect("startxref");
    let digits: String = pdf[at + 9..]
        .iter()
        .skip_while(|b| b.is_ascii_whitespace())
        .take_while(|b| b.is_ascii_digit())
        .map(|&b| char::from(b))
        .collect();
    digits.parse().expect("offset")
}

/// `pdf` with an incremental update (ISO 32000-1 §7.5.6) that redefines `objects`, the way a
/// PDF editor or a signing tool appends to a file.
fn incremental_update(pdf: &[u8], objects: &[(u32, Vec<u8>)], root: u32, size: u32) -> Vec<u8> {
    let mut out = pdf.to_vec();
    out.push(b'\n');
    let mut offsets = Vec::new();
    for (num, body) in objects {
        offsets.push((*num, out.len()));
        out.extend_from_slice(format!("{num} 0 obj\n").as_bytes());
        out.extend_from_slice(body);
        out.extend_from_slice(b"\nendobj\n");
    }
    let xref = out.len();
    out.extend_from_slice(b"xref\n0 1\n0000000000 65535 f\r\n");
    for (num, off) in offsets {
        out.extend_from_slice(format!("{num} 1\n{off:010} 00000 n\r\n").as_bytes());
    }
    out.extend_from_slice(
        format!(
            "trailer\n<< /Size {size} /Root {root} 0 R /Prev {} >>\nstartxref\n{xref}\n%%EOF\n",
            startxref(pdf)
        )
        .as_bytes(),
    );
    out
}

#[test]
fn incremental_updates_are_followed_newest_first() {
    let root = object_with(REPORT, b"/Type/Catalog");
    let results = object_with(REPORT, b"/Subtype/application#2Fjson");
    let new_results = b"{\"changed\": true}\n";
    let mut body = format!(
        "<< /Type /EmbeddedFile /Subtype /application#2Fjson /Length {} /Params << /Size {} >> >>\nstream\n",
        new_results.len(),
        new_results.len()
    )
    .into_bytes();
    body.extend_from_slice(new_results);
    body.extend_from_slice(b"\nendstream");
    // An unrelated object first (as a signature's update adds), then the replaced stream.
    let updated = incremental_update(
        REPORT,
        &[
            (9000, b"<< /Producer (an editor) >>".to_vec()),
            (results, body),
        ],
        root,
        9001,
    );
    let files = attachments(&updated).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(
        files,
        vec![
            ("results.json".to_owned(), new_results.to_vec()),
            ("study.yaml".to_owned(), SPEC.to_vec())
        ]
    );
    // The revision before the update is still in the file, unchanged.
    assert_eq!(
        attachments(&updated[..REPORT.len()]).expect("old revision")[0].1,
        RESULTS
    );
    // pikepdf reads the update the same way.
    let dir = tempfile::tempdir().expect("tempdir");
    let path = dir.path().join("updated.pdf");
    std::fs::write(&path, &updated).expect("write");
    if let Some(out) = python::run("pdf_structure.py", &[path.as_os_str()]) {
        let seen: Value = serde_json::from_slice(&out.stdout).expect("JSON");
        assert_eq!(
            seen["embedded_files"][0]["sha256"],
            sha256(new_results).as_str()
        );
        assert_eq!(seen["embedded_files"][1]["sha256"], sha256(SPEC).as_str());
    }
}

// ---------------------------------------------------------------- a small writer

#[derive(Clone, Copy, PartialEq)]
enum Layout {
    /// Classic cross-reference table, every object in the file.
    Table,
    /// Dictionaries in an object stream, a cross-reference stream with a PNG predictor.
    ObjectStreams,
}

fn sample_files() -> Vec<(String, Vec<u8>)> {
    vec![
        ("results.json".to_owned(), RESULTS.to_vec()),
        ("spec (v2) €.yaml".to_owned(), SPEC.to_vec()),
        ("empty.txt".to_owned(), Vec::new()),
    ]
}

fn utf16_hex(s: &str) -> String {
    let mut hex = String::from("<FEFF");
    for u in s.encode_utf16() {
        hex.push_str(&format!("{u:04X}"));
    }
    hex.push('>');
    hex
}

/// A minimal valid PDF carrying `files` as embedded files (name tree and `/AF`), written the
/// way ISO 32000-1 §7.5 lays a file out.
fn handmade(files: &[(String, Vec<u8>)], layout: Layout) -> Vec<u8> {
    use miniz_oxide::deflate::compress_to_vec_zlib;
    let mut sorted: Vec<&(String, Vec<u8>)> = files.iter().collect();
    // Name-tree keys are sorted by their bytes, here the UTF-16BE encoding.
    sorted.sort_by_key(|(n, _)| n.encode_utf16().collect::<Vec<u16>>());
    let k = sorted.len() as u32;
    // 1 catalog, 2 pages, 3 page, 4 name tree, then a file spec and a stream per file.
    let spec_num = |i: u32| 5 + 2 * i;
    let stream_num = |i: u32| 6 + 2 * i;
    let mut dicts: Vec<(u32, String)> = Vec::new();
    let af: Vec<String> = (0..k).map(|i| format!("{} 0 R", spec_num(i))).collect();
    dicts.push((
        1,
        format!(
            "<< /Type /Catalog /Pages 2 0 R /Names << /EmbeddedFiles 4 0 R >> /AF [{}] >>",
            af.join(" ")
        ),
    ));
    dicts.push((2, "<< /Type /Pages /Kids [3 0 R] /Count 1 >>".to_owned()));
    dicts.push((
        3,
        "<< /Type /Page /Parent 2 0 R /MediaBox [0 0 200 200] /Resources << >> >>".to_owned(),
    ));
    let pairs: Vec<String> = sorted
        .iter()
        .enumerate()
        .map(|(i, (n, _))| format!("{} {} 0 R", utf16_hex(n), spec_num(i as u32)))
        .collect();
    dicts.push((4, format!("<< /Names [{}] >>", pairs.join(" "))));
    for (i, (name, _)) in sorted.iter().enumerate() {
        dicts.push((
            spec_num(i as u32),
            format!(
                "<< /Type /Filespec /F (attachment-{i}) /UF {} /EF << /F {} 0 R >> /AFRelationship /Data >>",
                utf16_hex(name),
                stream_num(i as u32)
            ),
        ));
    }
    let mut out = b"%PDF-1.7\n%\xE2\xE3\xCF\xD3\n".to_vec();
    let mut offsets: std::collections::BTreeMap<u32, usize> = Default::default();
    fn put(
        out: &mut Vec<u8>,
        offsets: &mut std::collections::BTreeMap<u32, usize>,
        num: u32,
        body: &[u8],
    ) {
        offsets.insert(num, out.len());
        out.extend_from_slice(format!("{num} 0 obj\n").as_bytes());
        out.extend_from_slice(body);
        out.extend_from_slice(b"\nendobj\n");
    }
    let stream = |dict: &str, data: &[u8]| {
        let mut body = format!("<< {dict} /Length {} >>\nstream\n", data.len()).into_bytes();
        body.extend_from_slice(data);
        body.extend_from_slice(b"\nendstream");
        body
    };
    for (i, (_, data)) in sorted.iter().enumerate() {
        let packed = compress_to_vec_zlib(data, 6);
        let dict = format!(
            "/Type /EmbeddedFile /Filter /FlateDecode /Params << /Size {} >>",
            data.len()
        );
        put(
            &mut out,
            &mut offsets,
            stream_num(i as u32),
            &stream(&dict, &packed),
        );
    }
    let size = 5 + 2 * k + 2;
    match layout {
        Layout::Table => {
            for (num, d) in &dicts {
                put(&mut out, &mut offsets, *num, d.as_bytes());
            }
            let xref = out.len();
            out.extend_from_slice(
                format!("xref\n0 {}\n0000000000 65535 f\r\n", size - 2).as_bytes(),
            );
            for num in 1..size - 2 {
                out.extend_from_slice(format!("{:010} 00000 n\r\n", offsets[&num]).as_bytes());
            }
            out.extend_from_slice(
                format!(
                    "trailer\n<< /Size {} /Root 1 0 R >>\nstartxref\n{xref}\n%%EOF\n",
                    size - 2
                )
                .as_bytes(),
            );
        }
        Layout::ObjectStreams => {
            let objstm = size - 2;
            let xref_num = size - 1;
            let mut header = String::new();
            let mut body = String::new();
            for (num, d) in &dicts {
                header.push_str(&format!("{num} {} ", body.len()));
                body.push_str(d);
                body.push('\n');
            }
            let data = format!("{header}\n{body}");
            let first = header.len() + 1;
            let dict = format!(
                "/Type /ObjStm /N {} /First {first} /Filter /FlateDecode",
                dicts.len()
            );
            put(
                &mut out,
                &mut offsets,
                objstm,
                &stream(&dict, &compress_to_vec_zlib(data.as_bytes(), 6)),
            );
            let xref_at = out.len();
            // Rows of W [1 4 2], each behind a PNG "up" filter byte (PNG specification §9.2).
            let mut rows: Vec<[u8; 7]> = Vec::new();
            for num in 0..size {
                let mut row = [0u8; 7];
                let index = dicts.iter().position(|(n, _)| *n == num);
                let (kind, field2, field3): (u8, u32, u16) = if num == 0 {
                    (0, 0, 65535)
                } else if num == xref_num {
                    (1, xref_at as u32, 0)
                } else if let Some(i) = index {
                    (2, objstm, i as u16)
                } else {
                    (1, offsets[&num] as u32, 0)
                };
                row[0] = kind;
                row[1..5].copy_from_slice(&field2.to_be_bytes());
                row[5..7].copy_from_slice(&field3.to_be_bytes());
                rows.push(row);
            }
            let mut predicted = Vec::new();
            let mut prior = [0u8; 7];
            for row in &rows {
                predicted.push(2);
                predicted.extend(row.iter().zip(prior).map(|(a, b)| a.wrapping_sub(b)));
                prior = *row;
            }
            let dict = format!(
                "/Type /XRef /Size {size} /W [1 4 2] /Root 1 0 R /Filter /FlateDecode /DecodeParms << /Predictor 12 /Columns 7 >>"
            );
            put(
                &mut out,
                &mut offsets,
                xref_num,
                &stream(&dict, &compress_to_vec_zlib(&predicted, 6)),
            );
            out.extend_from_slice(format!("startxref\n{xref_at}\n%%EOF\n").as_bytes());
        }
    }
    out
}

#[test]
fn handmade_pdfs_read_back() {
    let files = sample_files();
    let mut sorted = files.clone();
    sorted.sort_by_key(|(n, _)| n.encode_utf16().collect::<Vec<u16>>());
    for layout in [Layout::Table, Layout::ObjectStreams] {
        let pdf = handmade(&files, layout);
        assert_eq!(attachments(&pdf).unwrap_or_else(|e| panic!("{e}")), sorted);
        // pikepdf agrees (names from /UF in UTF-16, same bytes).
        let dir = tempfile::tempdir().expect("tempdir");
        let path = dir.path().join("handmade.pdf");
        std::fs::write(&path, &pdf).expect("write");
        if let Some(out) = python::run("pdf_structure.py", &[path.as_os_str()]) {
            let seen: Value = serde_json::from_slice(&out.stdout).expect("JSON");
            let theirs: Vec<(String, String)> = seen["embedded_files"]
                .as_array()
                .expect("list")
                .iter()
                .map(|f| {
                    (
                        f["name"].as_str().unwrap_or_default().to_owned(),
                        f["sha256"].as_str().unwrap_or_default().to_owned(),
                    )
                })
                .collect();
            assert_eq!(theirs, names_and_hashes(&sorted));
        }
    }
}

// ---------------------------------------------------------------- refusals

#[test]
fn foreign_input_is_refused() {
    for input in [
        &b""[..],
        b"hello",
        b"\x89PNG\r\n\x1a\n\0\0\0\rIHDR",
        RESULTS,
        SPEC,
    ] {
        assert_eq!(attachments(input), Err(ExtractError::NotPdf));
    }
    for input in [
        &b"%PDF-1.7\n"[..],
        b"%PDF-1.7\n%%EOF\n",
        b"%PDF-1.7\nstartxref\n",
    ] {
        assert!(
            matches!(attachments(input), Err(ExtractError::Truncated { .. })),
            "{input:?}"
        );
    }
    // startxref pointing at something that is not cross-reference data.
    let e = attachments(b"%PDF-1.7\n1 0 obj\n<< >>\nendobj\nstartxref\n9\n%%EOF\n")
        .expect_err("no xref");
    assert!(matches!(e, ExtractError::Malformed { .. }), "{e}");
}

#[test]
fn loops_in_the_structure_are_refused() {
    // /Prev pointing back at its own section.
    let pdf = b"%PDF-1.7\nxref\n0 1\n0000000000 65535 f\r\ntrailer\n<< /Size 1 /Prev 9 >>\nstartxref\n9\n%%EOF\n";
    let e = attachments(pdf).expect_err("loop");
    assert!(
        matches!(&e, ExtractError::Malformed { what, .. } if what.contains("loop")),
        "{e}"
    );
    // A name tree whose kid is its own parent.
    let mut body = b"%PDF-1.7\n".to_vec();
    let o1 = body.len();
    body.extend_from_slice(
        b"1 0 obj\n<< /Type /Catalog /Names << /EmbeddedFiles 2 0 R >> >>\nendobj\n",
    );
    let o2 = body.len();
    body.extend_from_slice(b"2 0 obj\n<< /Kids [2 0 R] >>\nendobj\n");
    let x = body.len();
    body.extend_from_slice(
        format!("xref\n0 3\n0000000000 65535 f\r\n{o1:010} 00000 n\r\n{o2:010} 00000 n\r\ntrailer\n<< /Size 3 /Root 1 0 R >>\nstartxref\n{x}\n%%EOF\n").as_bytes(),
    );
    let e = attachments(&body).expect_err("loop");
    assert!(
        matches!(&e, ExtractError::Malformed { what, .. } if what.contains("loop")),
        "{e}"
    );
    // A stream whose /Length refers to the stream itself.
    let mut body = b"%PDF-1.7\n".to_vec();
    let o1 = body.len();
    body.extend_from_slice(b"1 0 obj\n<< /Length 1 0 R >>\nstream\nabc\nendstream\nendobj\n");
    let x = body.len();
    body.extend_from_slice(
        format!("xref\n0 2\n0000000000 65535 f\r\n{o1:010} 00000 n\r\ntrailer\n<< /Size 2 /Root 1 0 R >>\nstartxref\n{x}\n%%EOF\n").as_bytes(),
    );
    let e = attachments(&body).expect_err("cycle");
    assert!(matches!(&e, ExtractError::Malformed { .. }), "{e}");
}

/// `bytes` with the first `old` replaced by `new`; `old` must be there.
fn replace_once(bytes: &[u8], old: &str, new: &str) -> Vec<u8> {
    let at = bytes
        .windows(old.len())
        .position(|w| w == old.as_bytes())
        .unwrap_or_else(|| panic!("`{old}` not found"));
    [&bytes[..at], new.as_bytes(), &bytes[at + old.len()..]].concat()
}

#[test]
fn encrypted_unsupported_and_inconsistent_are_named() {
    let pdf = handmade(&sample_files(), Layout::Table);
    // The trailer follows every object, so growing it moves no offset.
    let encrypted = replace_once(
        &pdf,
        "/Root 1 0 R >>",
        "/Root 1 0 R /Encrypt << /Filter /Standard >> >>",
    );
    assert_eq!(attachments(&encrypted), Err(ExtractError::Encrypted));
    // Same-length edits keep every offset.
    let lzw = replace_once(&pdf, "/Filter /FlateDecode", "/Filter /LZWDecode  ");
    assert_eq!(
        attachments(&lzw),
        Err(ExtractError::UnsupportedFilter {
            filter: "LZWDecode".into()
        })
    );
    // empty.txt (the first stream written) records one byte but holds none.
    let size = replace_once(&pdf, "/Params << /Size 0 >>", "/Params << /Size 1>> ");
    assert_eq!(
        attachments(&size),
        Err(ExtractError::SizeMismatch {
            name: "empty.txt".into(),
            declared: 1,
            actual: 0
        })
    );
}

// ---------------------------------------------------------------- damage

/// Where the last `%%EOF` ends: cutting the file anywhere before it leaves it incomplete.
fn end_of_eof(pdf: &[u8]) -> usize {
    pdf.windows(5).rposition(|w| w == b"%%EOF").expect("%%EOF") + 5
}

#[test]
fn truncated_copies_are_refused() {
    let pdfs = [
        REPORT.to_vec(),
        handmade(&sample_files(), Layout::Table),
        handmade(&sample_files(), Layout::ObjectStreams),
    ];
    for pdf in &pdfs {
        let end = end_of_eof(pdf);
        let mut cuts: Vec<usize> = (0..end).step_by(97).collect();
        cuts.extend(end.saturating_sub(1500)..end);
        cuts.extend(0..64.min(end));
        for cut in cuts {
            match attachments(&pdf[..cut]) {
                Err(ExtractError::Truncated { .. } | ExtractError::NotPdf) => {}
                other => panic!("cut at {cut} of {}: {other:?}", pdf.len()),
            }
        }
        // What follows %%EOF (an end of line) is not needed.
        assert!(attachments(&pdf[..end]).is_ok());
    }
}

/// Whatever `damaged` gives, a file it returns under a name the intact PDF uses has the intact
/// bytes: damage is refused, never passed on as different content.
fn check_damage(intact: &[(String, Vec<u8>)], damaged: &[u8], what: &str) {
    if let Ok(files) = attachments(damaged) {
        for (name, data) in &files {
            if let Some((_, original)) = intact.iter().find(|(n, _)| n == name) {
                assert!(data == original, "{what}: {name} came back altered");
            }
        }
    }
}

#[test]
fn single_byte_damage_never_alters_content() {
    let mut rng = ChaCha8Rng::seed_from_u64(0x5EED_0001);
    for pdf in [
        REPORT.to_vec(),
        handmade(&sample_files(), Layout::Table),
        handmade(&sample_files(), Layout::ObjectStreams),
    ] {
        let intact = attachments(&pdf).expect("intact");
        for _ in 0..1500 {
            let mut damaged = pdf.clone();
            let at = rng.random_range(0..damaged.len());
            damaged[at] ^= rng.random_range(1..=255u8);
            check_damage(&intact, &damaged, &format!("byte {at}"));
        }
    }
}

#[test]
fn heavier_damage_is_survived() {
    let mut rng = ChaCha8Rng::seed_from_u64(0x5EED_0002);
    for pdf in [
        REPORT.to_vec(),
        handmade(&sample_files(), Layout::Table),
        handmade(&sample_files(), Layout::ObjectStreams),
    ] {
        let intact = attachments(&pdf).expect("intact");
        for round in 0..600 {
            let mut damaged = pdf.clone();
            match round % 3 {
                // Several bytes changed anywhere.
                0 => {
                    for _ in 0..rng.random_range(2..16) {
                        let at = rng.random_range(0..damaged.len());
                        damaged[at] = rng.random();
                    }
                }
                // A piece cut out of the middle, the end kept: every later offset is off.
                1 => {
                    let a = rng.random_range(0..damaged.len());
                    let b = (a + rng.random_range(1..2000)).min(damaged.len());
                    damaged.drain(a..b);
                }
                // Bytes changed near the end, where the cross-reference data are.
                _ => {
                    let from = damaged.len().saturating_sub(3000);
                    for _ in 0..rng.random_range(1..4) {
                        let at = rng.random_range(from..damaged.len());
                        damaged[at] = rng.random();
                    }
                }
            }
            // Multi-byte damage may, very rarely, keep a checksum intact; what is checked
            // here is only that reading ends with a value.
            let _ = attachments(&damaged);
            if round % 3 == 1 {
                check_damage(&intact, &damaged, "cut");
            }
        }
    }
}

mod properties {
    use proptest::prelude::*;
    use surety::report::extract::attachments;

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(400))]

        // Arbitrary bytes behind a header and in front of a startxref trailer end in a value.
        #[test]
        fn arbitrary_bodies_end_in_a_value(
            body in proptest::collection::vec(any::<u8>(), 0..600),
            offset in 0usize..700,
        ) {
            let mut pdf = b"%PDF-1.7\n".to_vec();
            pdf.extend_from_slice(&body);
            pdf.extend_from_slice(format!("\nstartxref\n{offset}\n%%EOF\n").as_bytes());
            let _ = attachments(&pdf);
        }

        // Text made of PDF tokens is the harder case for the parser.
        #[test]
        fn token_soup_ends_in_a_value(
            tokens in proptest::collection::vec(
                prop::sample::select(vec![
                    "<<", ">>", "[", "]", "/Type", "/XRef", "/W", "/Index", "/Size", "/Root",
                    "/Prev", "/Length", "/Filter", "/FlateDecode", "/ObjStm", "/N", "/First",
                    "/Names", "/Kids", "/EF", "/F", "0", "1", "2", "7", "-1", "99999999999",
                    "0 R", "1 0 R", "2 0 R", "obj", "endobj", "stream\n", "\nendstream",
                    "xref\n", "trailer", "(a)", "<41>", "(", "<", "%c\n", "true", "null",
                ]),
                0..120,
            ),
        ) {
            let mut pdf = b"%PDF-1.7\n1 0 obj\n".to_vec();
            pdf.extend_from_slice(tokens.join(" ").as_bytes());
            pdf.push(b'\n');
            let x = pdf.len();
            pdf.extend_from_slice(b"xref\n0 2\n0000000000 65535 f\r\n0000000009 00000 n\r\ntrailer\n<< /Size 2 /Root 1 0 R >>\n");
            pdf.extend_from_slice(format!("startxref\n{x}\n%%EOF\n").as_bytes());
            let _ = attachments(&pdf);
        }
    }
}
