//! `lamina merge`: the shards of a sweep or a map joined into exactly the file one unsharded
//! run writes, byte for byte, after checking that every value or cell is there exactly once.
//! A shard's rows are copied as they are; only their order changes.

use std::collections::HashMap;
use std::path::PathBuf;
use std::process::ExitCode;

use anyhow::{Context, Result, bail};
use lamina_export::{MapCsv, SweepCsv, write_bytes_atomically};
use lamina_scenario::Scenario;

use super::outputs;

/// Arguments of `lamina merge`.
#[derive(clap::Args, Debug)]
pub struct MergeArgs {
    /// Scenario file (.ron) the shards were run from.
    file: PathBuf,
    /// The shards' CSV files (of `lamina sweep --shard` or `lamina map --shard`).
    #[arg(required = true, value_name = "SHARD.csv")]
    shards: Vec<PathBuf>,
    /// Where to write the whole file (atomically).
    #[arg(long, value_name = "FILE.csv")]
    out: PathBuf,
}

/// A row of a shard: its text (with its line end) and where it came from.
struct Row<'a> {
    text: &'a str,
    file: usize,
    line: usize,
}

/// The shards' contents, read whole.
struct Shards {
    paths: Vec<PathBuf>,
    texts: Vec<String>,
}

impl Shards {
    fn read(paths: &[PathBuf]) -> Result<Self> {
        let texts = paths
            .iter()
            .map(|p| {
                std::fs::read_to_string(p).with_context(|| format!("cannot read {}", p.display()))
            })
            .collect::<Result<_>>()?;
        Ok(Self {
            paths: paths.to_vec(),
            texts,
        })
    }

    fn name(&self, file: usize) -> String {
        self.paths[file].display().to_string()
    }

    /// Every file's rows after its header, which must be `header` exactly.
    fn rows(&self, header: &str, what: &str) -> Result<Vec<Row<'_>>> {
        let mut rows = Vec::new();
        for (file, text) in self.texts.iter().enumerate() {
            let Some(rest) = text.strip_prefix(header) else {
                let found = text.lines().next().unwrap_or("");
                bail!(
                    "{}: its header is '{found}', but a shard of this scenario's {what} starts \
                     with '{}'; was it run from another scenario?",
                    self.name(file),
                    header.trim_end()
                );
            };
            for (idx, line) in rest.split_inclusive('\n').enumerate() {
                if !line.ends_with('\n') {
                    bail!(
                        "{}: line {} ends without a line end: the file is cut short",
                        self.name(file),
                        idx + 2
                    );
                }
                rows.push(Row {
                    text: line,
                    file,
                    line: idx + 2,
                });
            }
        }
        Ok(rows)
    }
}

/// The grid values of one axis and their positions, found by their exact bits.
struct Axis {
    name: String,
    values: Vec<f64>,
    index: HashMap<u64, usize>,
}

impl Axis {
    fn new(name: &str, values: Vec<f64>) -> Self {
        let index = values
            .iter()
            .enumerate()
            .map(|(i, v)| (v.to_bits(), i))
            .collect();
        Self {
            name: name.to_string(),
            values,
            index,
        }
    }

    /// The position of the value written as `text` in row `row` of `shards`.
    fn position(&self, text: &str, row: &Row<'_>, shards: &Shards) -> Result<usize> {
        let value: f64 = text.parse().map_err(|_| {
            anyhow::anyhow!(
                "{} line {}: '{text}' is not a number of {}",
                shards.name(row.file),
                row.line,
                self.name
            )
        })?;
        self.index.get(&value.to_bits()).copied().ok_or_else(|| {
            anyhow::anyhow!(
                "{} line {}: {} = {text} is not one of the scenario's values of {}; was the \
                 shard run from another version of the scenario?",
                shards.name(row.file),
                row.line,
                self.name,
                self.name
            )
        })
    }
}

/// The first `n` fields of a row.
fn fields(text: &str, n: usize) -> Vec<&str> {
    text.trim_end_matches(['\n', '\r'])
        .splitn(n + 1, ',')
        .take(n)
        .collect()
}

/// The header a writer puts at the top of its file.
fn header_of(write: impl FnOnce(&mut Vec<u8>) -> Result<()>) -> Result<String> {
    let mut bytes = Vec::new();
    write(&mut bytes)?;
    Ok(String::from_utf8(bytes)?)
}

/// `a = 1, b = 2; a = 1.5, b = 2` for at most ten listed items, with the count of the rest.
fn list(items: &[String]) -> String {
    let shown: Vec<&str> = items.iter().take(10).map(String::as_str).collect();
    let more = items.len().saturating_sub(10);
    if more > 0 {
        format!("{} and {more} more", shown.join("; "))
    } else {
        shown.join("; ")
    }
}

/// Joins map shards: one row per cell, in cell order.
fn merge_map(scenario: &Scenario, shards: &Shards) -> Result<String> {
    let spec = super::map_run::map_spec(scenario)?;
    let name = |idx: usize| scenario.parameters[idx].name.clone();
    let (x_name, y_name) = (name(spec.x.parameter), name(spec.y.parameter));
    let header = header_of(|out| {
        MapCsv::new(out, &x_name, &y_name)?.finish()?;
        Ok(())
    })?;
    let x = Axis::new(
        &x_name,
        (0..spec.x.n_values()).map(|i| spec.x.value(i)).collect(),
    );
    let y = Axis::new(
        &y_name,
        (0..spec.y.n_values()).map(|i| spec.y.value(i)).collect(),
    );
    let rows = shards.rows(&header, "map")?;
    let mut cells: Vec<Option<&Row<'_>>> = vec![None; spec.n_cells()];
    for row in &rows {
        let f = fields(row.text, 2);
        let (Some(xt), Some(yt)) = (f.first(), f.get(1)) else {
            bail!(
                "{} line {}: too few columns",
                shards.name(row.file),
                row.line
            );
        };
        let index = spec.cell_index(x.position(xt, row, shards)?, y.position(yt, row, shards)?);
        if let Some(first) = cells[index] {
            if shards.paths[first.file] == shards.paths[row.file] && first.file != row.file {
                bail!(
                    "{} is given twice (the cell {x_name} = {xt}, {y_name} = {yt} would be \
                     there twice); give each shard once",
                    shards.name(row.file)
                );
            }
            bail!(
                "the cell {x_name} = {xt}, {y_name} = {yt} is there twice: {} line {} and {} \
                 line {}; give each shard once",
                shards.name(first.file),
                first.line,
                shards.name(row.file),
                row.line
            );
        }
        cells[index] = Some(row);
    }
    let missing: Vec<String> = (cells.iter().enumerate())
        .filter(|(_, c)| c.is_none())
        .map(|(i, _)| {
            let (a, b) = spec.cell_values(i);
            format!("{x_name} = {a}, {y_name} = {b}")
        })
        .collect();
    if !missing.is_empty() {
        bail!(
            "{} of {} cell(s) are in none of the shards (is a shard missing or unfinished?): {}",
            missing.len(),
            spec.n_cells(),
            list(&missing)
        );
    }
    let mut text = header;
    for row in cells.into_iter().flatten() {
        text.push_str(row.text);
    }
    Ok(text)
}

/// Greatest common divisor.
fn gcd(a: usize, b: usize) -> usize {
    if b == 0 { a } else { gcd(b, a % b) }
}

/// Joins sweep shards: each value's rows (k = 0, 1, ...) from one shard, values in sweep
/// order. A value may have no rows (its run kept no points), so the shards' layout decides
/// what is missing: with N shards (the common step between the values of one file), every
/// residue 0..N-1 must come from exactly one file.
fn merge_sweep(scenario: &Scenario, shards: &Shards) -> Result<String> {
    let (spec, _) = super::sweep::sweep_spec(scenario)?;
    let parameter = scenario.parameters[spec.parameter].name.clone();
    let names: Vec<String> = scenario.states.iter().map(|s| s.name.clone()).collect();
    let header = header_of(|out| {
        SweepCsv::new(out, &parameter, &names)?.finish()?;
        Ok(())
    })?;
    let axis = Axis::new(
        &parameter,
        (0..spec.n_values()).map(|i| spec.value(i)).collect(),
    );
    let rows = shards.rows(&header, "sweep")?;
    // each value: the file it is in and its rows in order
    let mut values: Vec<Option<(usize, Vec<&Row<'_>>)>> = vec![None; spec.n_values()];
    for row in &rows {
        let f = fields(row.text, 2);
        let (Some(vt), Some(kt)) = (f.first(), f.get(1)) else {
            bail!(
                "{} line {}: too few columns",
                shards.name(row.file),
                row.line
            );
        };
        let index = axis.position(vt, row, shards)?;
        let k: usize = kt.parse().map_err(|_| {
            anyhow::anyhow!(
                "{} line {}: k '{kt}' is not a count",
                shards.name(row.file),
                row.line
            )
        })?;
        let entry = values[index].get_or_insert_with(|| (row.file, Vec::new()));
        if entry.0 != row.file {
            if shards.paths[entry.0] == shards.paths[row.file] {
                bail!(
                    "{} is given twice (the value {parameter} = {vt} would be there twice); \
                     give each shard once",
                    shards.name(row.file)
                );
            }
            bail!(
                "the value {parameter} = {vt} is in two shards, {} and {}; give each shard once",
                shards.name(entry.0),
                shards.name(row.file)
            );
        }
        if k != entry.1.len() {
            bail!(
                "{} line {}: the value {parameter} = {vt} has point k = {k} where k = {} was \
                 due (is the shard in the file twice?)",
                shards.name(row.file),
                row.line,
                entry.1.len()
            );
        }
        entry.1.push(row);
    }
    let mut step = 0;
    for file in 0..shards.paths.len() {
        let present: Vec<usize> = (values.iter().enumerate())
            .filter(|(_, v)| v.as_ref().is_some_and(|(f, _)| *f == file))
            .map(|(i, _)| i)
            .collect();
        step = present.windows(2).fold(step, |g, w| gcd(g, w[1] - w[0]));
    }
    let n_shards = if step == 0 { shards.paths.len() } else { step };
    let mut owner: Vec<Option<usize>> = vec![None; n_shards];
    for (index, value) in values.iter().enumerate() {
        let Some((file, _)) = value else { continue };
        match owner[index % n_shards] {
            Some(other) if other != *file => bail!(
                "{} and {} both hold shard {}/{n_shards} of the sweep; give each shard once",
                shards.name(other),
                shards.name(*file),
                index % n_shards
            ),
            _ => owner[index % n_shards] = Some(*file),
        }
    }
    let missing: Vec<String> = (0..spec.n_values())
        .filter(|i| owner[i % n_shards].is_none())
        .map(|i| format!("{parameter} = {}", axis.values[i]))
        .collect();
    if !missing.is_empty() {
        bail!(
            "{} of {} value(s) are in none of the shards (the files look like {n_shards} \
             shards, and a shard is missing): {}",
            missing.len(),
            spec.n_values(),
            list(&missing)
        );
    }
    let mut text = header;
    for (_, rows) in values.into_iter().flatten() {
        for row in rows {
            text.push_str(row.text);
        }
    }
    Ok(text)
}

/// `lamina merge`.
pub fn merge(args: &MergeArgs) -> Result<ExitCode> {
    outputs::check_paths(&args.file, &[("--out", &args.out)])?;
    // the shards are read whole before anything is written, so --out may name one of them
    let scenario = lamina_scenario::load_file(&args.file)
        .with_context(|| format!("cannot load {}", args.file.display()))?;
    let shards = Shards::read(&args.shards)?;
    let first = shards.texts.first().map(String::as_str).unwrap_or("");
    let is_map = scenario.map.is_some()
        && (scenario.sweep.is_none()
            || first.lines().next().is_some_and(|h| h.contains(",regime,")));
    let (text, what) = if is_map {
        (merge_map(&scenario, &shards)?, "map")
    } else if scenario.sweep.is_some() {
        (merge_sweep(&scenario, &shards)?, "sweep")
    } else {
        bail!(
            "{} has neither a sweep nor a map block: nothing to merge",
            args.file.display()
        );
    };
    write_bytes_atomically(&args.out, text.as_bytes())
        .with_context(|| format!("--out {}", args.out.display()))?;
    eprintln!(
        "joined {} shard file(s) into the whole {what}: {}",
        shards.paths.len(),
        args.out.display()
    );
    Ok(ExitCode::SUCCESS)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn gcd_and_fields() {
        // [analytic]
        assert_eq!(gcd(12, 8), 4);
        assert_eq!(fields("0.1,2,periodic,1,\n", 2), vec!["0.1", "2"]);
    }
}
