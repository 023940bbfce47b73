//! CSV layout, round-trip number formatting and atomic replacement.

use std::io::{self, ErrorKind, Write};

use lamina_core::run::{CutPoint, StrobeSample};
use lamina_export::{
    AtomicFile, BranchCsv, CutCsv, ExportError, StrobeCsv, format_number, write_atomically,
    write_bytes_atomically,
};

#[test]
fn numbers_round_trip_exactly() {
    for v in [
        0.1,
        1.0 / 3.0,
        1e-300,
        -2.5e300,
        6.663_286_859_323_13,
        f64::MIN_POSITIVE,
        -0.0,
        123456789.0,
        -9.237_126_235_162_041e-5,
        1e16,
        1.5e21,
        5e-324,
    ] {
        let text = format_number(v);
        let back: f64 = text.parse().expect("parses");
        // [common practice] shortest round-trip formatting gives back the same bits
        assert_eq!(back.to_bits(), v.to_bits(), "{v} -> {text}");
    }
}

#[test]
fn csv_rows_carry_every_number_exactly() {
    let values = [
        1.0 / 3.0,
        -9.237_126_235_162_041e-5,
        4.545_758_347_126_625e-5,
        1e-300,
        -2.5e300,
        1e16,
        -0.0,
        27.0,
    ];
    let names: Vec<String> = (0..values.len()).map(|i| format!("s{i}")).collect();
    let mut csv = StrobeCsv::new(Vec::new(), &names).expect("header");
    csv.write(&StrobeSample {
        index: 0,
        t: 0.1,
        state: values.to_vec(),
    })
    .expect("row");
    let text = String::from_utf8(csv.finish().expect("flush")).expect("utf8");
    let row = text.lines().nth(1).expect("a row");
    let cells: Vec<&str> = row.split(',').skip(2).collect();
    assert_eq!(cells.len(), values.len());
    for (cell, v) in cells.iter().zip(values) {
        let back: f64 = cell.parse().expect("parses");
        // [common practice] the shortest round-trip form gives back the same bits
        assert_eq!(back.to_bits(), v.to_bits(), "{v} -> {cell}");
        assert_eq!(
            *cell,
            format_number(v),
            "a cell is written as format_number"
        );
    }
}

#[test]
fn cut_csv_has_the_product_columns() {
    let names = vec!["x".to_string(), "v".to_string()];
    let mut csv = CutCsv::new(Vec::new(), &names).expect("header");
    csv.write(&CutPoint {
        t: 1.5,
        return_time: None,
        state: vec![0.25, -1.0],
    })
    .expect("row");
    csv.write(&CutPoint {
        t: 3.0,
        return_time: Some(1.5),
        state: vec![0.5, 2.0],
    })
    .expect("row");
    let text = String::from_utf8(csv.finish().expect("flush")).expect("utf8");
    assert_eq!(
        text,
        "k,t,return_time,x,v\n0,1.5,,0.25,-1.0\n1,3.0,1.5,0.5,2.0\n"
    );
}

#[test]
fn strobe_csv_has_the_product_columns() {
    let names = vec!["x".to_string()];
    let mut csv = StrobeCsv::new(Vec::new(), &names).expect("header");
    csv.write(&StrobeSample {
        index: 7,
        t: 14.0,
        state: vec![0.1],
    })
    .expect("row");
    let text = String::from_utf8(csv.finish().expect("flush")).expect("utf8");
    assert_eq!(text, "k,t,x\n0,14.0,0.1\n");
}

#[test]
fn branch_csv_has_the_product_columns() {
    let names = vec!["x".to_string(), "v".to_string()];
    let mut csv = BranchCsv::new(Vec::new(), "mu", &names).expect("header");
    csv.write_point(0.5, true, None, &[0.0, 0.0]).expect("row");
    csv.write_point(0.75, false, Some(6.5), &[2.0, -0.125])
        .expect("row");
    let text = String::from_utf8(csv.finish().expect("flush")).expect("utf8");
    // [common practice] PRODUCT.md: `<parameter>,stable,period,<state names>`, the period
    // empty for a resting point
    assert_eq!(
        text,
        "mu,stable,period,x,v\n0.5,true,,0.0,0.0\n0.75,false,6.5,2.0,-0.125\n"
    );
}

/// An output whose reader has gone: every write fails as a closed pipe does.
struct ClosedPipe;

impl Write for ClosedPipe {
    fn write(&mut self, _buf: &[u8]) -> io::Result<usize> {
        Err(io::Error::from(ErrorKind::BrokenPipe))
    }
    fn flush(&mut self) -> io::Result<()> {
        Ok(())
    }
}

#[test]
fn a_failed_write_is_an_io_error_of_its_kind() {
    let names = vec!["x".to_string()];
    let mut csv = CutCsv::new(ClosedPipe, &names).expect("the header is only buffered");
    let point = CutPoint {
        t: 1.0,
        return_time: Some(1.0),
        state: vec![0.5],
    };
    // the rows fill the writer's buffer until it has to write
    let err = (0..1_000_000)
        .find_map(|_| csv.write(&point).err())
        .expect("a write fails once the buffer is full");
    match err {
        ExportError::Io { source, .. } => assert_eq!(source.kind(), ErrorKind::BrokenPipe),
        other => panic!("expected an I/O error, got {other:?}"),
    }
    let mut csv = CutCsv::new(ClosedPipe, &names).expect("header");
    csv.write(&point).expect("buffered");
    match csv.finish() {
        Err(ExportError::Io { source, .. }) => assert_eq!(source.kind(), ErrorKind::BrokenPipe),
        Err(other) => panic!("expected an I/O error, got {other:?}"),
        Ok(_) => panic!("finishing into a closed pipe succeeded"),
    }
}

#[test]
fn atomic_file_replaces_only_on_commit() {
    let dir = tempfile::tempdir().expect("tempdir");
    let target = dir.path().join("out.csv");
    std::fs::write(&target, "good\n").expect("seed");
    {
        let mut file = AtomicFile::create(&target).expect("create");
        file.write_all(b"half").expect("write");
        // dropped without commit: a failed run
    }
    assert_eq!(std::fs::read_to_string(&target).expect("read"), "good\n");
    let result: Result<(), ExportError> = write_atomically(&target, |f| {
        f.write_all(b"new\n").map_err(|e| ExportError::Io {
            path: "t".into(),
            source: e,
        })
    });
    result.expect("commit");
    assert_eq!(std::fs::read_to_string(&target).expect("read"), "new\n");
    let leftovers = std::fs::read_dir(dir.path()).expect("list").count();
    assert_eq!(leftovers, 1, "no temporary files left behind");
}

#[test]
fn atomic_file_into_missing_directory_fails_cleanly() {
    let dir = tempfile::tempdir().expect("tempdir");
    let target = dir.path().join("missing").join("out.csv");
    assert!(AtomicFile::create(&target).is_err());
}

#[test]
fn bytes_written_atomically_replace_the_target_whole() {
    let dir = tempfile::tempdir().expect("tempdir");
    let target = dir.path().join("picture.png");
    std::fs::write(&target, "old").expect("seed");
    write_bytes_atomically(&target, b"new bytes").expect("written");
    // [common practice] the target holds exactly the new bytes and no temporary file is left
    assert_eq!(std::fs::read(&target).expect("read"), b"new bytes");
    assert_eq!(std::fs::read_dir(dir.path()).expect("list").count(), 1);
    let missing = dir.path().join("missing").join("picture.png");
    let err = write_bytes_atomically(&missing, b"x").expect_err("no such folder");
    assert!(err.to_string().contains("picture.png"), "{err}");
}
