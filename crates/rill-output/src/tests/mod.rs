//! Tests of the writers. Unit factors are checked against NIST SP 811
//! (2008 edition, Appendix B): 1 psi = 6894.757293168 Pa, 1 bbl (oil) =
//! 0.158987294928 m^3, 1 ft = 0.3048 m, 1 md = 9.869233e-16 m^2.

mod aquifer_series;
mod atomic_writes;
mod chromium;
pub(crate) mod fixtures;
mod html;
mod oil_water_maps;
mod oil_water_series;
mod series_files;
mod vtk_maps;
