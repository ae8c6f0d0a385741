//! VTK XML maps: `maps/step_NNNN.vtr` (RectilinearGrid) or
//! `maps/step_NNNN.vts` (StructuredGrid) per report time and the collection
//! `maps/rill.pvd` that ParaView opens as one time series.
//!
//! Geometry and layout:
//! - x runs east along `i`, y north along `j`, z is **elevation**
//!   (z = −depth, in report length units), so ParaView shows layer 1 on top.
//!   Coordinates must increase, so the VTK `k` index counts from the bottom
//!   layer up: VTK `k` = `nz − layer`. The cell array `layer` holds the deck's
//!   1-based layer number.
//! - When every column has the same layer interfaces (a flat `top`, `dz`
//!   uniform in each layer) the grid is rectilinear: a `.vtr` with one z per
//!   interface. Otherwise (a dipping per-column `top`, or per-cell `dz`) it
//!   is a `.vts` with the coordinates of every corner point, so the map dips
//!   as the reservoir does. A corner is shared by up to four columns, each
//!   with its own flat-faced interface depth there; the corner takes their
//!   mean. That keeps neighbouring cells sharing their corners (no gaps or
//!   overlaps in the picture) and puts each column's cell centres at the
//!   mean of its corners: exact for a planar dip, smoothed at a step. The
//!   cell array `depth` holds each cell centre's depth as the simulator
//!   uses it (column top plus the layers above).
//! - Cell data: `pressure` (NaN in inactive cells), in an oil-water run
//!   `sw` and `so` (water and oil saturation, fractions, `so = 1 - sw`; NaN
//!   in inactive cells), then `active` (1/0), `porosity`, `kx`, `ky`,
//!   `kz`, `depth`, `layer`. Units are the report
//!   system's; they are named in field data (`pressure_unit`, ...), as string
//!   arrays, together with `TimeValue` (the report time, in `time_unit`).
//! - Cell arrays are Float64 (UInt8 for `active`, Int32 for `layer`), inline
//!   base64 binary compressed with zlib (`vtkZLibDataCompressor`, UInt64
//!   headers): valid XML, and compact for the layer- or uniform-valued rock
//!   arrays, which are encoded once and reused in every step file.

use std::io::{self, Write};

use base64::engine::general_purpose::STANDARD as B64;
use base64::Engine as _;
use flate2::write::ZlibEncoder;
use flate2::Compression;
use rill_model::derived::cell_center_depths;
use rill_model::Case;

use crate::text::{escape, push_shortest, shortest};
use crate::units::{display_unit, Quantity};

/// Uncompressed size of one zlib block (VTK's default).
const BLOCK: usize = 32 * 1024;

/// The parts of every step file that do not change with time, prepared once.
pub(crate) struct MapWriter {
    nx: usize,
    ny: usize,
    nz: usize,
    /// `vtk_order[v]` = deck cell index of VTK cell `v`.
    vtk_order: Vec<usize>,
    active: Vec<bool>,
    /// `<DataArray>` elements of the static cell arrays, encoded.
    static_arrays: String,
    /// `<Coordinates>` (rectilinear) or `<Points>` (structured), encoded.
    geometry: String,
    /// A StructuredGrid (`.vts`), else a RectilinearGrid (`.vtr`).
    structured: bool,
    field_units: String,
    pressure_factor: f64,
}

impl MapWriter {
    pub fn new(case: &Case) -> MapWriter {
        let system = case.report.units;
        let grid = &case.grid;
        let rock = &case.rock;
        let (nx, ny, nz) = (grid.nx, grid.ny, grid.nz);
        let length = display_unit(Quantity::Length, system);
        let perm = display_unit(Quantity::Permeability, system);
        let pressure = display_unit(Quantity::Pressure, system);
        let time = display_unit(Quantity::Time, system);

        let mut vtk_order = Vec::with_capacity(grid.cell_count());
        for kv in 0..nz {
            let k = nz - 1 - kv;
            for j in 0..ny {
                for i in 0..nx {
                    vtk_order.push(grid.index(i, j, k));
                }
            }
        }
        let active: Vec<bool> = (0..grid.cell_count()).map(|c| rock.is_active(c)).collect();
        let depth = cell_center_depths(grid);
        let gather = |values: &[f64], factor: f64| -> Vec<f64> {
            vtk_order.iter().map(|&c| values[c] / factor).collect()
        };

        let mut static_arrays = String::new();
        let u8s: Vec<u8> = vtk_order.iter().map(|&c| u8::from(active[c])).collect();
        static_arrays.push_str(&data_array("UInt8", "active", &u8s));
        static_arrays.push_str(&data_array_f64("porosity", &gather(&rock.porosity, 1.0)));
        static_arrays.push_str(&data_array_f64("kx", &gather(&rock.kx, perm.factor)));
        static_arrays.push_str(&data_array_f64("ky", &gather(&rock.ky, perm.factor)));
        static_arrays.push_str(&data_array_f64("kz", &gather(&rock.kz, perm.factor)));
        static_arrays.push_str(&data_array_f64("depth", &gather(&depth, length.factor)));
        let layers: Vec<u8> = vtk_order
            .iter()
            .flat_map(|&c| ((c / (nx * ny)) as i32 + 1).to_le_bytes())
            .collect();
        static_arrays.push_str(&data_array("Int32", "layer", &layers));

        // Coordinates: cumulative widths; interface depths per column.
        let cumulative = |widths: &[f64]| -> Vec<f64> {
            let mut acc = 0.0;
            let mut out = vec![0.0];
            for w in widths {
                acc += w / length.factor;
                out.push(acc);
            }
            out
        };
        let xs = cumulative(&grid.dx);
        let ys = cumulative(&grid.dy);
        let plane = nx * ny;
        // interfaces[col * (nz + 1) + k]: depth of the top of layer k (k = nz: the base), m.
        let mut interfaces = vec![0.0; plane * (nz + 1)];
        for col in 0..plane {
            let mut d = grid.top[col];
            interfaces[col * (nz + 1)] = d;
            for k in 0..nz {
                d += grid.dz[col + plane * k];
                interfaces[col * (nz + 1) + k + 1] = d;
            }
        }
        let first = &interfaces[..nz + 1];
        let structured = interfaces.chunks(nz + 1).any(|col| col != first);
        let geometry = if structured {
            points(nx, ny, nz, &xs, &ys, &interfaces, length.factor)
        } else {
            let zs: Vec<f64> = first.iter().rev().map(|d| -d / length.factor).collect();
            let mut coordinates = String::from("      <Coordinates>\n");
            for (name, values) in [("x", &xs), ("y", &ys), ("z", &zs)] {
                coordinates.push_str(&format!(
                    "        <DataArray type=\"Float64\" Name=\"{name}\" format=\"ascii\">{}</DataArray>\n",
                    join(values)
                ));
            }
            coordinates.push_str("      </Coordinates>\n");
            coordinates
        };

        let mut field_units = String::new();
        for (name, value) in [
            ("time_unit", time.name.as_str()),
            ("pressure_unit", pressure.name.as_str()),
            ("permeability_unit", perm.name.as_str()),
            ("length_unit", length.name.as_str()),
            ("z_axis", "elevation = -depth"),
        ] {
            field_units.push_str(&string_array(name, value));
        }

        MapWriter {
            nx,
            ny,
            nz,
            vtk_order,
            active,
            static_arrays,
            geometry,
            structured,
            field_units,
            pressure_factor: pressure.factor,
        }
    }

    /// The step files' extension: `vts` for a structured grid, else `vtr`.
    pub fn extension(&self) -> &'static str {
        if self.structured {
            "vts"
        } else {
            "vtr"
        }
    }

    /// Writes one step file: `pressure` in Pa per deck cell, `time` in
    /// report units; an oil-water run's `water_saturation` per deck cell
    /// adds the cell arrays `sw` and `so` (`1 - sw`).
    pub fn write_step(
        &self,
        w: &mut dyn Write,
        pressure: &[f64],
        water_saturation: Option<&[f64]>,
        time: f64,
    ) -> io::Result<()> {
        // Inactive cells are NaN whatever the simulator left in them.
        let gather = |f: &dyn Fn(usize) -> f64| -> Vec<f64> {
            self.vtk_order
                .iter()
                .map(|&c| if self.active[c] { f(c) } else { f64::NAN })
                .collect()
        };
        let values = gather(&|c| pressure[c] / self.pressure_factor);
        let extent = format!("0 {} 0 {} 0 {}", self.nx, self.ny, self.nz);
        let kind = if self.structured {
            "StructuredGrid"
        } else {
            "RectilinearGrid"
        };
        write!(
            w,
            "<?xml version=\"1.0\"?>\n\
             <VTKFile type=\"{kind}\" version=\"1.0\" byte_order=\"LittleEndian\" header_type=\"UInt64\" compressor=\"vtkZLibDataCompressor\">\n\
             \x20 <{kind} WholeExtent=\"{extent}\">\n\
             \x20   <FieldData>\n\
             \x20     <DataArray type=\"Float64\" Name=\"TimeValue\" NumberOfTuples=\"1\" format=\"ascii\">{}</DataArray>\n\
             {}\
             \x20   </FieldData>\n\
             \x20   <Piece Extent=\"{extent}\">\n\
             \x20     <CellData Scalars=\"pressure\">\n",
            shortest(time),
            self.field_units,
        )?;
        w.write_all(data_array_f64("pressure", &values).as_bytes())?;
        if let Some(sw) = water_saturation {
            w.write_all(data_array_f64("sw", &gather(&|c| sw[c])).as_bytes())?;
            w.write_all(data_array_f64("so", &gather(&|c| 1.0 - sw[c])).as_bytes())?;
        }
        w.write_all(self.static_arrays.as_bytes())?;
        write!(
            w,
            "      </CellData>\n\
             {}\
             \x20   </Piece>\n\
             \x20 </{kind}>\n\
             </VTKFile>\n",
            self.geometry
        )
    }
}

/// The `.pvd` collection: one `DataSet` per step file, `timestep` in report time units.
pub(crate) fn write_pvd(w: &mut dyn Write, steps: &[(f64, String)]) -> io::Result<()> {
    writeln!(w, "<?xml version=\"1.0\"?>")?;
    writeln!(w, "<VTKFile type=\"Collection\" version=\"1.0\" byte_order=\"LittleEndian\" header_type=\"UInt64\">")?;
    writeln!(w, "  <Collection>")?;
    for (time, file) in steps {
        writeln!(
            w,
            "    <DataSet timestep=\"{}\" group=\"\" part=\"0\" file=\"{}\"/>",
            shortest(*time),
            escape(file)
        )?;
    }
    writeln!(w, "  </Collection>")?;
    writeln!(w, "</VTKFile>")
}

/// The `<Points>` of a structured grid: every corner, VTK order (i fastest,
/// then j, then k from the base up), each at the mean of the interface
/// depths of the columns around it (see the module doc), in `length_factor`
/// units; `interfaces` as built in [`MapWriter::new`].
fn points(
    nx: usize,
    ny: usize,
    nz: usize,
    xs: &[f64],
    ys: &[f64],
    interfaces: &[f64],
    length_factor: f64,
) -> String {
    let mut bytes = Vec::with_capacity((nx + 1) * (ny + 1) * (nz + 1) * 24);
    for kv in 0..=nz {
        let k = nz - kv;
        for (j, &y) in ys.iter().enumerate() {
            for (i, &x) in xs.iter().enumerate() {
                let (mut sum, mut n) = (0.0, 0.0);
                for jj in j.saturating_sub(1)..(j + 1).min(ny) {
                    for ii in i.saturating_sub(1)..(i + 1).min(nx) {
                        sum += interfaces[(ii + nx * jj) * (nz + 1) + k];
                        n += 1.0;
                    }
                }
                let z = -(sum / n) / length_factor;
                for v in [x, y, z] {
                    bytes.extend_from_slice(&v.to_le_bytes());
                }
            }
        }
    }
    format!(
        "      <Points>\n        <DataArray type=\"Float64\" Name=\"Points\" NumberOfComponents=\"3\" format=\"binary\">{}</DataArray>\n      </Points>\n",
        compressed_base64(&bytes)
    )
}

fn join(values: &[f64]) -> String {
    let mut s = String::new();
    for (n, v) in values.iter().enumerate() {
        if n > 0 {
            s.push(' ');
        }
        push_shortest(&mut s, *v);
    }
    s
}

fn data_array_f64(name: &str, values: &[f64]) -> String {
    let bytes: Vec<u8> = values.iter().flat_map(|v| v.to_le_bytes()).collect();
    data_array("Float64", name, &bytes)
}

/// One `<DataArray>` with `bytes` (little-endian values) as zlib blocks in base64.
fn data_array(vtk_type: &str, name: &str, bytes: &[u8]) -> String {
    format!(
        "        <DataArray type=\"{vtk_type}\" Name=\"{name}\" format=\"binary\">{}</DataArray>\n",
        compressed_base64(bytes)
    )
}

/// The text of a compressed inline binary array: the header
/// `[blocks, block size, last partial block size, compressed sizes...]`
/// (UInt64) and the concatenated zlib blocks, each encoded in base64
/// separately, as VTK's reader expects.
pub(crate) fn compressed_base64(bytes: &[u8]) -> String {
    let mut blocks = Vec::new();
    for chunk in bytes.chunks(BLOCK) {
        let mut z = ZlibEncoder::new(Vec::new(), Compression::fast());
        z.write_all(chunk).expect("writing to a Vec");
        blocks.push(z.finish().expect("writing to a Vec"));
    }
    let mut header: Vec<u64> = vec![
        blocks.len() as u64,
        BLOCK as u64,
        (bytes.len() % BLOCK) as u64,
    ];
    header.extend(blocks.iter().map(|b| b.len() as u64));
    let header_bytes: Vec<u8> = header.iter().flat_map(|v| v.to_le_bytes()).collect();
    let mut out = B64.encode(header_bytes);
    out.push_str(&B64.encode(blocks.concat()));
    out
}

/// A one-tuple VTK string array (ASCII: character codes, 0-terminated).
fn string_array(name: &str, value: &str) -> String {
    let mut codes: Vec<String> = value.bytes().map(|b| b.to_string()).collect();
    codes.push("0".into());
    format!(
        "      <DataArray type=\"String\" Name=\"{name}\" NumberOfTuples=\"1\" format=\"ascii\">{}</DataArray>\n",
        codes.join(" ")
    )
}
