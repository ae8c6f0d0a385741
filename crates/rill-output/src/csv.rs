//! `series.csv`: one header row with units, one row per report time.

use std::io::{self, Write};

use crate::series::SeriesTable;
use crate::text::{csv_field, push_shortest};

/// Writes the table as RFC 4180 CSV with `\n` line ends. Numbers are the
/// shortest text that parses back to the same double.
pub(crate) fn write_csv(table: &SeriesTable, w: &mut dyn Write) -> io::Result<()> {
    let header: Vec<String> = table
        .columns
        .iter()
        .map(|c| csv_field(&c.header()))
        .collect();
    writeln!(w, "{}", header.join(","))?;
    let mut line = String::new();
    for row in 0..table.rows() {
        line.clear();
        for (n, column) in table.columns.iter().enumerate() {
            if n > 0 {
                line.push(',');
            }
            push_shortest(&mut line, column.values[row]);
        }
        line.push('\n');
        w.write_all(line.as_bytes())?;
    }
    Ok(())
}
