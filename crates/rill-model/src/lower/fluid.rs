use super::*;

impl<'s> Lowerer<'s> {
    pub(super) fn lower_fluid(
        &mut self,
        file: usize,
        block: &Block,
        datum: Option<f64>,
        spans: &mut Spans,
    ) -> Option<Fluid> {
        let get = |this: &mut Self,
                   key: &str,
                   dim: Dim,
                   gauge: Gauge|
         -> Option<Option<(f64, Location)>> {
            match find(block, key) {
                None => Some(None),
                Some(s) => Some(Some((
                    this.quantity(file, s, dim, gauge)?,
                    Location::new(file, s.value.span),
                ))),
            }
        };
        let viscosity = get(self, "viscosity", Dim::VISCOSITY, Gauge::Refused);
        let fvf = get(self, "fvf", Dim::FVF, Gauge::Refused);
        let compressibility = get(
            self,
            "compressibility",
            Dim::COMPRESSIBILITY,
            Gauge::Refused,
        );
        let density = get(self, "density", Dim::DENSITY, Gauge::Refused);
        let ref_pressure = get(self, "ref_pressure", Dim::PRESSURE, Gauge::Allowed);
        let (viscosity, fvf, density) = (viscosity??, fvf??, density??);
        let compressibility = compressibility?;
        spans.viscosity = Some(viscosity.1);
        spans.fvf = Some(fvf.1);
        spans.density = Some(density.1);
        spans.fluid_compressibility = compressibility.map(|c| c.1);
        let ref_pressure = match ref_pressure? {
            Some((p, _)) => p,
            None => datum?,
        };
        Some(Fluid {
            name: label_of(block),
            viscosity: viscosity.0,
            fvf: fvf.0,
            compressibility: compressibility.map(|c| c.0).unwrap_or(0.0),
            density: density.0,
            ref_pressure,
        })
    }
}
