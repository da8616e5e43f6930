//! Tests of the observed-labs CSV: every rule of the format, each bad case
//! checked for the `file:line:column (header)` it names.

use super::*;

fn parse(text: &str) -> Observations {
    Observations::from_csv(text, "labs.csv").unwrap_or_else(|e| panic!("{e}"))
}

/// The message of a file that must be refused.
fn refused(text: &str) -> String {
    match Observations::from_csv(text, "labs.csv") {
        Ok(o) => panic!("accepted: {o:?}"),
        Err(e) => e.to_string(),
    }
}

fn assert_refused(text: &str, fragments: &[&str]) {
    let message = refused(text);
    for f in fragments {
        assert!(message.contains(f), "{f:?} not in:\n{message}");
    }
}

#[test]
fn a_good_file_with_comments_blank_lines_and_blank_cells() {
    let obs = parse(
        "# invented labs\n\
         \n\
         time_h,na_mmol_l,urine_ml,urine_na_mmol_l\n\
         0,121,,\n\
         # a comment between rows\n\
         2, 122.5 ,300,45\n\
         \n\
         4,,250,\n",
    );
    assert_eq!(obs.file, "labs.csv");
    assert_eq!(obs.rows.len(), 3);
    assert_eq!(obs.rows[0].line, 4);
    assert_eq!(obs.rows[1].line, 6);
    assert_eq!(obs.rows[2].line, 8);
    assert_eq!(obs.rows[1].time_h, 2.0);
    assert_eq!(obs.rows[1].get(Lab::Na), Some(122.5));
    assert_eq!(obs.rows[2].get(Lab::Na), None);
    assert_eq!(obs.rows[1].get(Lab::UrineNa), Some(45.0));
    assert_eq!(obs.labs(), vec![Lab::Na, Lab::UrineMl, Lab::UrineNa]);
    assert_eq!(obs.last_time_h(), 4.0);
    // 1 + 3 + 1 values.
    assert_eq!(obs.count(), 5);
    assert_eq!(
        obs.urine_collections(),
        vec![(0.0, 2.0, 300.0), (2.0, 4.0, 250.0)]
    );
}

#[test]
fn time_may_stand_in_any_column_and_crlf_and_a_bom_are_read() {
    let obs = parse("\u{feff}weight_kg,time_h,k_mmol_l\r\n70.2,0,3.9\r\n,6,4.4\r\n");
    assert_eq!(obs.rows[1].time_h, 6.0);
    assert_eq!(obs.rows[0].get(Lab::WeightKg), Some(70.2));
    assert_eq!(obs.rows[1].get(Lab::K), Some(4.4));
    // Lab::ALL order, not the file's.
    assert_eq!(obs.labs(), vec![Lab::K, Lab::WeightKg]);
}

#[test]
fn urine_on_the_first_row_means_since_time_zero() {
    let obs = parse("time_h,urine_ml\n3,420\n5,180\n");
    assert_eq!(
        obs.urine_collections(),
        vec![(0.0, 3.0, 420.0), (3.0, 5.0, 180.0)]
    );
    assert_refused(
        "time_h,na_mmol_l,urine_ml\n0,120,50\n",
        &["labs.csv:2:3 (urine_ml)", "since the previous row"],
    );
}

#[test]
fn columns_and_units_are_the_documented_ones() {
    let names: Vec<&str> = Lab::ALL.iter().map(|l| l.column()).collect();
    assert_eq!(
        names,
        [
            "na_mmol_l",
            "k_mmol_l",
            "glucose_mmol_l",
            "urine_ml",
            "urine_osm_mosm_kg",
            "urine_na_mmol_l",
            "urine_k_mmol_l",
            "weight_kg"
        ]
    );
    assert_eq!(Lab::Na.unit(), "mmol/L");
    assert_eq!(Lab::UrineMl.unit(), "mL");
    assert_eq!(Lab::UrineOsm.unit(), "mOsm/kg");
    assert_eq!(Lab::WeightKg.unit(), "kg");
    for lab in Lab::ALL {
        assert_eq!(Lab::from_column(lab.column()), Some(lab));
        let (lo, hi) = lab.plausible();
        assert!(lo >= 0.0 && lo < hi, "{lab:?}");
    }
    // The bounds hold the values a ward sees every day (common practice):
    // sodium 135-145 and potassium 3.5-5.0 mmol/L, fasting glucose
    // 4-6 mmol/L, a concentrated urine of 800 mOsm/kg.
    for (lab, typical) in [
        (Lab::Na, 140.0),
        (Lab::K, 4.2),
        (Lab::Glucose, 5.0),
        (Lab::UrineOsm, 800.0),
    ] {
        let (lo, hi) = lab.plausible();
        assert!(lo < typical && typical < hi, "{lab:?}");
    }
}

#[test]
fn values_at_the_bounds_are_accepted_and_just_outside_refused() {
    let obs = parse("time_h,na_mmol_l,k_mmol_l\n0,90,10\n1,190,1\n");
    assert_eq!(obs.count(), 4);
    assert_refused(
        "time_h,na_mmol_l\n0,120\n1,121\n2,122\n3,400\n",
        &[
            "labs.csv:5:2 (na_mmol_l): 400 is outside 90-190 mmol/L, the range a measured serum sodium can take",
        ],
    );
    assert_refused(
        "time_h,na_mmol_l\n0,89.9\n",
        &["labs.csv:2:2 (na_mmol_l): 89.9 is outside 90-190 mmol/L"],
    );
    assert_refused(
        "time_h,urine_osm_mosm_kg\n0,1600\n",
        &["labs.csv:2:2 (urine_osm_mosm_kg)", "20-1500 mOsm/kg"],
    );
    assert_refused(
        "time_h,urine_ml\n1,-5\n",
        &["labs.csv:2:2 (urine_ml): -5 is outside 0-10000 mL"],
    );
    assert_refused(
        "time_h,weight_kg\n0,0.5\n",
        &["labs.csv:2:2 (weight_kg)", "1-400 kg"],
    );
}

#[test]
fn text_and_non_finite_numbers_are_refused() {
    assert_refused(
        "time_h,na_mmol_l,k_mmol_l\n0,121,4.0\n2,122,high\n",
        &[
            "labs.csv:3:3 (k_mmol_l): \"high\" is not a number",
            "mmol/L",
        ],
    );
    assert_refused(
        "time_h,na_mmol_l\n0,NaN\n",
        &["labs.csv:2:2 (na_mmol_l): NaN is not a finite number"],
    );
    assert_refused(
        "time_h,na_mmol_l\ninf,130\n",
        &["labs.csv:2:1 (time_h): inf is not a finite number"],
    );
    assert_refused(
        "time_h,na_mmol_l\n2h,130\n",
        &["labs.csv:2:1 (time_h): \"2h\" is not a number", "hours"],
    );
}

#[test]
fn times_must_be_given_non_negative_and_strictly_increasing() {
    assert_refused(
        "time_h,na_mmol_l\n0,120\n2,121\n4,122\n3,123\n",
        &["labs.csv:5:1 (time_h): 3 h is not after the previous row's 4 h (line 4)"],
    );
    assert_refused(
        "time_h,na_mmol_l\n0,120\n0,121\n",
        &["labs.csv:3:1 (time_h): 0 h is not after the previous row's 0 h"],
    );
    assert_refused(
        "time_h,na_mmol_l\n-1,120\n",
        &["labs.csv:2:1 (time_h): -1 h is before the start"],
    );
    assert_refused(
        "na_mmol_l,time_h\n120,\n",
        &["labs.csv:2:2 (time_h): the time is blank"],
    );
}

#[test]
fn the_header_is_checked() {
    assert_refused(
        "time_h,na_mmol,k_mmol_l\n0,120,4\n",
        &[
            "labs.csv:1:2 (na_mmol): unknown column \"na_mmol\"",
            "did you mean \"na_mmol_l\"?",
        ],
    );
    assert_refused(
        "time_h,serum_chloride\n0,100\n",
        &[
            "labs.csv:1:2 (serum_chloride): unknown column",
            "the columns are time_h, na_mmol_l",
        ],
    );
    assert_refused(
        "time_h,na_mmol_l,k_mmol_l,na_mmol_l\n0,120,4,120\n",
        &["labs.csv:1:4 (na_mmol_l): \"na_mmol_l\" appears twice in the header (columns 2 and 4)"],
    );
    assert_refused(
        "time_h,time_h,na_mmol_l\n0,0,120\n",
        &["labs.csv:1:2 (time_h): \"time_h\" appears twice"],
    );
    assert_refused(
        "time_h,,na_mmol_l\n0,,120\n",
        &["labs.csv:1:2 (unnamed): empty column name"],
    );
    assert_refused(
        "na_mmol_l,k_mmol_l\n120,4\n",
        &["labs.csv:1:1: the header has no \"time_h\" column"],
    );
    assert_refused("time_h\n0\n", &["labs.csv:1:1: the header names no lab"]);
}

#[test]
fn rows_must_match_the_header_and_hold_a_value() {
    assert_refused(
        "time_h,na_mmol_l\n0,136,5\n",
        &[
            "labs.csv:2:3 (beyond the header): the row has 3 cells but the header has 2",
            "decimal comma",
        ],
    );
    assert_refused(
        "time_h,na_mmol_l,k_mmol_l\n0,136\n",
        &["labs.csv:2:3 (k_mmol_l): the row has 2 cells but the header has 3"],
    );
    assert_refused(
        "time_h,na_mmol_l,k_mmol_l\n0,120,4\n2,,\n",
        &["labs.csv:3:1: the row at 2 h holds no measured value"],
    );
}

#[test]
fn quoted_cells_are_refused() {
    assert_refused(
        "time_h,na_mmol_l\n0,\"121\"\n",
        &["labs.csv:2:2 (na_mmol_l)", "quoted cells are not supported"],
    );
    assert_refused(
        "\"time_h\",na_mmol_l\n0,121\n",
        &["labs.csv:1:1", "quoted cells are not supported"],
    );
}

#[test]
fn empty_files_and_files_without_rows_are_refused() {
    assert_refused("", &["labs.csv: the file is empty"]);
    assert_refused("# only a comment\n\n", &["labs.csv: the file is empty"]);
    assert_refused(
        "# labs\ntime_h,na_mmol_l\n",
        &["labs.csv:2:1: the header is followed by no rows"],
    );
}

#[test]
fn the_number_of_rows_is_bounded() {
    let mut text = String::from("time_h,na_mmol_l\n");
    for i in 0..MAX_ROWS {
        text.push_str(&format!("{i},140\n"));
    }
    assert_eq!(parse(&text).rows.len(), MAX_ROWS);
    text.push_str(&format!("{MAX_ROWS},140\n"));
    let line = MAX_ROWS + 2;
    assert_refused(
        &text,
        &[&format!("labs.csv:{line}:1: more than {MAX_ROWS} rows")],
    );
}

#[test]
fn load_reads_a_file_and_refuses_a_folder() {
    let dir = std::env::temp_dir().join(format!("tidewater-obs-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("labs.csv");
    std::fs::write(&path, "time_h,na_mmol_l\n0,118\n4,121\n").unwrap();
    let obs = Observations::load(&path).unwrap();
    assert_eq!(obs.file, path.display().to_string());
    assert_eq!(obs.rows[1].get(Lab::Na), Some(121.0));
    let err = Observations::load(&dir).unwrap_err().to_string();
    assert!(err.contains("regular file"), "{err}");
    std::fs::remove_dir_all(&dir).ok();
}
