use super::*;

impl<'s> Lowerer<'s> {
    pub(super) fn lower_report(&mut self, file: usize, block: &Block) -> ReportSettings {
        let units = find(block, "units")
            .and_then(|s| self.choice(file, s, schema::SYSTEMS))
            .and_then(rill_units::System::from_name)
            .unwrap_or_default();
        let maps =
            match find(block, "maps").and_then(|s| self.choice(file, s, schema::MAP_SELECTIONS)) {
                Some("last") => MapSelection::Last,
                Some("none") => MapSelection::None,
                _ => MapSelection::All,
            };
        ReportSettings { units, maps }
    }
}
