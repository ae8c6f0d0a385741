//! VTK XML maps: valid XML, extents, coordinates and array sizes.

use std::io::Read;

use base64::engine::general_purpose::STANDARD as B64;
use base64::Engine as _;

use super::fixtures::*;
use crate::{write_results, RunMeta};
use rill_model::UnitSystem;

/// Decodes an inline compressed binary VTK array (UInt64 header) to bytes.
pub(super) fn decode(text: &str) -> Vec<u8> {
    let text = text.trim();
    let first = B64.decode(&text[..32]).unwrap();
    let word =
        |b: &[u8], n: usize| u64::from_le_bytes(b[8 * n..8 * n + 8].try_into().unwrap()) as usize;
    let blocks = word(&first, 0);
    let header_len = (3 + blocks) * 8;
    let header_chars = header_len.div_ceil(3) * 4;
    let header = B64.decode(&text[..header_chars]).unwrap();
    let data = B64.decode(&text[header_chars..]).unwrap();
    let (block_size, last) = (word(&header, 1), word(&header, 2));
    let mut out = Vec::new();
    let mut at = 0;
    for b in 0..blocks {
        let csize = word(&header, 3 + b);
        let mut chunk = Vec::new();
        flate2::read::ZlibDecoder::new(&data[at..at + csize])
            .read_to_end(&mut chunk)
            .unwrap();
        let expected = if b + 1 == blocks && last != 0 {
            last
        } else {
            block_size
        };
        assert_eq!(chunk.len(), expected, "block {b}");
        out.extend(chunk);
        at += csize;
    }
    assert_eq!(at, data.len());
    out
}

pub(super) fn f64s(bytes: &[u8]) -> Vec<f64> {
    bytes
        .chunks(8)
        .map(|c| f64::from_le_bytes(c.try_into().unwrap()))
        .collect()
}

#[test]
fn vtr_is_valid_xml_with_extents_coordinates_and_cell_arrays() {
    let (dir, deck) = deck_dir();
    let (nx, ny, nz) = (4, 3, 2);
    let case = case(nx, ny, nz, UnitSystem::Field);
    let results = results(&case);
    let files = write_results(
        &dir.path().join("lobe.out"),
        &case,
        &results,
        &RunMeta::new(&deck),
    )
    .unwrap();
    assert_eq!(files.maps.len(), 3);
    assert!(files.maps[2].ends_with("maps/step_0002.vtr"));

    let text = std::fs::read_to_string(&files.maps[2]).unwrap();
    let doc = roxmltree::Document::parse(&text).expect("valid XML");
    let root = doc.root_element();
    assert_eq!(root.attribute("type"), Some("RectilinearGrid"));
    assert_eq!(root.attribute("header_type"), Some("UInt64"));
    let grid = root
        .children()
        .find(|n| n.has_tag_name("RectilinearGrid"))
        .unwrap();
    assert_eq!(grid.attribute("WholeExtent"), Some("0 4 0 3 0 2"));
    let piece = grid.children().find(|n| n.has_tag_name("Piece")).unwrap();
    assert_eq!(piece.attribute("Extent"), Some("0 4 0 3 0 2"));

    // Coordinates: nx+1, ny+1, nz+1 values, increasing, in ft; z = -depth.
    let coords = piece
        .children()
        .find(|n| n.has_tag_name("Coordinates"))
        .unwrap();
    let axis: Vec<Vec<f64>> = coords
        .children()
        .filter(|n| n.has_tag_name("DataArray"))
        .map(|n| {
            n.text()
                .unwrap()
                .split_whitespace()
                .map(|v| v.parse().unwrap())
                .collect()
        })
        .collect();
    assert_eq!(
        [axis[0].len(), axis[1].len(), axis[2].len()],
        [nx + 1, ny + 1, nz + 1]
    );
    for a in &axis {
        assert!(a.windows(2).all(|w| w[1] > w[0]), "{a:?}");
    }
    assert!(
        (axis[0][4] - (100.0 + 110.0 + 120.0 + 130.0)).abs() < 1e-9,
        "{:?}",
        axis[0]
    );
    // The flat top at 7000 ft, layers of 20 and 25 ft below it.
    assert!((axis[2][2] + 7000.0).abs() < 1e-9, "{:?}", axis[2]);
    assert!(
        (axis[2][0] + 7000.0 + 20.0 + 25.0).abs() < 1e-9,
        "{:?}",
        axis[2]
    );

    check_cell_arrays(piece, nx, ny, nz, 7032.5);

    // Field data: the time and the units.
    let field = grid
        .children()
        .find(|n| n.has_tag_name("FieldData"))
        .unwrap();
    let time = field
        .children()
        .find(|n| n.attribute("Name") == Some("TimeValue"))
        .unwrap();
    assert_eq!(time.text(), Some("20"));
    let unit = field
        .children()
        .find(|n| n.attribute("Name") == Some("pressure_unit"))
        .unwrap();
    assert_eq!(
        unit.text(),
        Some("112 115 105 0"),
        "\"psi\" as character codes"
    );
}

#[test]
fn pvd_lists_every_step_with_report_times() {
    let (dir, deck) = deck_dir();
    let case = case(2, 2, 1, UnitSystem::Field);
    let results = results(&case);
    let files = write_results(
        &dir.path().join("lobe.out"),
        &case,
        &results,
        &RunMeta::new(&deck),
    )
    .unwrap();
    let pvd = files.pvd.unwrap();
    let text = std::fs::read_to_string(&pvd).unwrap();
    let doc = roxmltree::Document::parse(&text).unwrap();
    assert_eq!(doc.root_element().attribute("type"), Some("Collection"));
    let sets = pvd_sets(&pvd);
    assert_eq!(
        sets,
        [
            ("0".into(), "step_0000.vtr".into()),
            ("10".into(), "step_0001.vtr".into()),
            ("20".into(), "step_0002.vtr".into())
        ]
    );
}

#[test]
fn no_cell_pressures_means_no_maps() {
    let (dir, deck) = deck_dir();
    let case = case(2, 2, 1, UnitSystem::Field);
    let mut results = results(&case);
    results.pressure.clear();
    let files = write_results(
        &dir.path().join("lobe.out"),
        &case,
        &results,
        &RunMeta::new(&deck),
    )
    .unwrap();
    assert!(files.pvd.is_none() && files.maps.is_empty());
    assert!(!files.dir.join("maps").exists());
    let html = std::fs::read_to_string(files.report_html).unwrap();
    assert!(html.contains("no maps"));
}

/// The cell arrays of the map at report time 2 of the fixture case: their
/// names and order, sizes, and sample values in field units.
/// `depth_302` is the depth of the centre of cell (i=3, j=0, layer 2), ft.
fn check_cell_arrays(piece: roxmltree::Node, nx: usize, ny: usize, nz: usize, depth_302: f64) {
    let cell_data = piece
        .children()
        .find(|n| n.has_tag_name("CellData"))
        .unwrap();
    let cells = nx * ny * nz;
    let mut names = Vec::new();
    for array in cell_data.children().filter(|n| n.has_tag_name("DataArray")) {
        let name = array.attribute("Name").unwrap();
        let bytes = decode(array.text().unwrap());
        let size = match array.attribute("type").unwrap() {
            "Float64" => 8,
            "Int32" => 4,
            "UInt8" => 1,
            other => panic!("type {other}"),
        };
        assert_eq!(bytes.len(), cells * size, "{name}");
        names.push(name.to_string());
        let vtk = |i: usize, j: usize, layer: usize| i + nx * (j + ny * (nz - layer));
        match name {
            "pressure" => {
                let p = f64s(&bytes);
                // Deck cell (i=1, j=2, layer 1) at report time 2: 3000 - 20 - c psi.
                let c = 1 + nx * 2;
                assert!((p[vtk(1, 2, 1)] - (2980.0 - c as f64)).abs() < 1e-9);
                // The inactive cell is the last one (top-right of the bottom layer).
                assert!(p[vtk(nx - 1, ny - 1, nz)].is_nan());
                assert_eq!(p.iter().filter(|v| v.is_nan()).count(), 1);
            }
            "active" => assert_eq!(bytes.iter().filter(|&&b| b == 0).count(), 1),
            "kx" => {
                let k = f64s(&bytes);
                assert!((k[vtk(0, 0, 1)] - 100.0).abs() < 1e-9, "md");
                assert!((k[vtk(0, 0, 2)] - 150.0).abs() < 1e-9, "md");
            }
            "depth" => {
                let d = f64s(&bytes);
                // Column (3, 0): layer 2 centre = top + 20 + 25/2.
                assert!(
                    (d[vtk(3, 0, 2)] - depth_302).abs() < 1e-9,
                    "{}",
                    d[vtk(3, 0, 2)]
                );
            }
            "layer" => {
                let l: Vec<i32> = bytes
                    .chunks(4)
                    .map(|c| i32::from_le_bytes(c.try_into().unwrap()))
                    .collect();
                assert_eq!(
                    (l[0], l[cells - 1]),
                    (2, 1),
                    "VTK k runs from the bottom layer up"
                );
            }
            _ => {}
        }
    }
    assert_eq!(
        names,
        ["pressure", "active", "porosity", "kx", "ky", "kz", "depth", "layer"]
    );
}

/// The (timestep, file) pairs of a `.pvd` collection.
fn pvd_sets(path: &std::path::Path) -> Vec<(String, String)> {
    let text = std::fs::read_to_string(path).unwrap();
    let doc = roxmltree::Document::parse(&text).unwrap();
    doc.descendants()
        .filter(|n| n.has_tag_name("DataSet"))
        .map(|n| {
            (
                n.attribute("timestep").unwrap().into(),
                n.attribute("file").unwrap().into(),
            )
        })
        .collect()
}

/// The fixture case's result set written with `maps = selection`; the
/// temporary folder lives as long as the files are read.
fn written_with(selection: rill_model::MapSelection) -> (tempfile::TempDir, crate::WrittenFiles) {
    let (dir, deck) = deck_dir();
    let mut case = case(2, 2, 1, UnitSystem::Field);
    case.report.maps = selection;
    let results = results(&case);
    let files = write_results(
        &dir.path().join("lobe.out"),
        &case,
        &results,
        &RunMeta::new(&deck),
    )
    .unwrap();
    (dir, files)
}

#[test]
fn maps_last_writes_the_last_report_time_only() {
    let (_dir, files) = written_with(rill_model::MapSelection::Last);
    assert_eq!(files.maps.len(), 1);
    assert_eq!(
        pvd_sets(files.pvd.as_ref().unwrap()),
        [("20".into(), "step_0002.vtr".into())]
    );
    // It holds the last report time's pressures: the same file as the
    // third map of a `maps = all` set.
    let (_dir_all, all) = written_with(rill_model::MapSelection::All);
    assert_eq!(
        std::fs::read(&files.maps[0]).unwrap(),
        std::fs::read(all.dir.join("maps/step_0002.vtr")).unwrap()
    );
}

#[test]
fn maps_none_writes_no_map_but_the_report_keeps_its_layer_maps() {
    let (_dir, files) = written_with(rill_model::MapSelection::None);
    assert!(files.pvd.is_none() && files.maps.is_empty());
    assert!(!files.dir.join("maps").exists());
    let html = std::fs::read_to_string(files.report_html).unwrap();
    assert!(!html.contains("no maps"), "the layer maps are drawn");
}

/// A dipping top (2 ft per column east, 1 ft per row north): the maps are
/// StructuredGrids with every corner point, each at the mean depth of the
/// columns around it, and the collection names the `.vts` files.
#[test]
fn a_dipping_top_is_written_as_a_structured_grid_with_its_corner_points() {
    let (dir, deck) = deck_dir();
    let (nx, ny, nz) = (4, 3, 2);
    let mut case = case(nx, ny, nz, UnitSystem::Field);
    dip(&mut case);
    let results = results(&case);
    let files = write_results(
        &dir.path().join("lobe.out"),
        &case,
        &results,
        &RunMeta::new(&deck),
    )
    .unwrap();
    assert_eq!(files.maps.len(), 3);
    assert!(files.maps[2].ends_with("maps/step_0002.vts"));
    assert_eq!(
        pvd_sets(files.pvd.as_ref().unwrap())[2],
        ("20".into(), "step_0002.vts".into())
    );
    assert!(!files.dir.join("maps/step_0002.vtr").exists());

    let text = std::fs::read_to_string(&files.maps[2]).unwrap();
    let doc = roxmltree::Document::parse(&text).expect("valid XML");
    let root = doc.root_element();
    assert_eq!(root.attribute("type"), Some("StructuredGrid"));
    let grid = root
        .children()
        .find(|n| n.has_tag_name("StructuredGrid"))
        .unwrap();
    assert_eq!(grid.attribute("WholeExtent"), Some("0 4 0 3 0 2"));
    let piece = grid.children().find(|n| n.has_tag_name("Piece")).unwrap();
    let array = piece
        .children()
        .find(|n| n.has_tag_name("Points"))
        .and_then(|p| p.children().find(|n| n.has_tag_name("DataArray")))
        .unwrap();
    assert_eq!(array.attribute("NumberOfComponents"), Some("3"));
    let xyz = f64s(&decode(array.text().unwrap()));
    assert_eq!(xyz.len(), 3 * (nx + 1) * (ny + 1) * (nz + 1));
    // Corner (i, j) of VTK level kv (0: the base of layer 2, 2: the top).
    let point = |i: usize, j: usize, kv: usize| {
        let p = 3 * (i + (nx + 1) * (j + (ny + 1) * kv));
        (xyz[p], xyz[p + 1], xyz[p + 2])
    };
    let near = |a: f64, b: f64| (a - b).abs() < 1e-9;
    // The south-west corner of the top belongs to column (0, 0) alone.
    let (x, y, z) = point(0, 0, 2);
    assert!(x == 0.0 && y == 0.0 && near(z, -7000.0), "{x} {y} {z}");
    // An inner corner: columns (0,0), (1,0), (0,1), (1,1), tops 7000, 7002,
    // 7001, 7003 ft: mean 7001.5 ft; x = 100 ft (dx of column 0), y = 80 ft.
    let (x, y, z) = point(1, 1, 2);
    assert!(
        near(x, 100.0) && near(y, 80.0) && near(z, -7001.5),
        "{x} {y} {z}"
    );
    // The north-east corner of the base: column (3, 2), top 7000 + 6 + 2,
    // then 20 and 25 ft of layers.
    let (x, y, z) = point(nx, ny, 0);
    assert!(
        near(x, 460.0) && near(y, 240.0) && near(z, -7053.0),
        "{x} {y} {z}"
    );
    // The interface between the layers on the east edge, row 1 and 2:
    // columns (3, 0) and (3, 1) at 7006 + 20 and 7007 + 20 ft.
    assert!(near(point(nx, 1, 1).2, -7026.5));
    // Elevation rises from the base to the top at every corner.
    for j in 0..=ny {
        for i in 0..=nx {
            assert!(point(i, j, 0).2 < point(i, j, 1).2 && point(i, j, 1).2 < point(i, j, 2).2);
        }
    }
    // The cell arrays are those of the rectilinear map; `depth` follows the
    // dip: column (3, 0) tops at 7006 ft.
    check_cell_arrays(piece, nx, ny, nz, 7038.5);
}
