//! One pass of the csv crate's `ByteRecord` reader over a file: the least
//! any CSV-reading tool built on it has to do. Prints records and fields.

fn main() {
    let path = std::env::args().nth(1).expect("usage: crescendo-bench-floor FILE");
    let mut rdr = csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .from_path(&path)
        .expect("open");
    let mut record = csv::ByteRecord::new();
    let (mut records, mut fields) = (0u64, 0u64);
    while rdr.read_byte_record(&mut record).expect("read") {
        records += 1;
        fields += record.len() as u64;
    }
    println!("{records} records, {fields} fields");
}
