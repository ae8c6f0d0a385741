//! Prints the whole unit registry as JSON, one object per unit:
//! `{"name", "factor", "dim": {"l", "m", "t", "s"}, "gauge", "description"}`.
//! Read by `scripts/checks/units_pint.py`, which compares the factors with pint.

fn main() {
    let json = serde_json::to_string_pretty(rill_units::registry()).expect("registry serialises");
    println!("{json}");
}
