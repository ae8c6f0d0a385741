//! With the `petsc` feature: finds PETSc and MPI with pkg-config and
//! compiles `src/shim.c` against their headers. The shim keeps every ABI
//! detail (the widths of `PetscInt` and `MPI_Comm`, MPI's handles, PETSc's
//! macros) on the C side, so the Rust side sees only fixed-width types and
//! works with Open MPI and MPICH alike. Without the feature it does nothing.

fn main() {
    println!("cargo:rerun-if-changed=build.rs");
    #[cfg(feature = "petsc")]
    petsc::build();
}

#[cfg(feature = "petsc")]
mod petsc {
    const INSTALL: &str =
        "rill's `petsc` feature needs PETSc and MPI with their pkg-config files. \
On Debian or Ubuntu: `apt-get install --no-install-recommends libpetsc-real-dev pkg-config`. \
For a PETSc built elsewhere, add its `lib/pkgconfig` directory to PKG_CONFIG_PATH.";

    pub fn build() {
        println!("cargo:rerun-if-changed=src/shim.c");
        println!("cargo:rerun-if-env-changed=PKG_CONFIG_PATH");
        let petsc = probe(&["PETSc", "petsc"]);
        // PETSc's .pc file names MPI's library but, on Debian, not its
        // include directory: ask for MPI too (Open MPI's or MPICH's name).
        let mpi = probe_optional(&["mpi", "ompi", "mpich"]);
        let mut build = cc::Build::new();
        build.file("src/shim.c").warnings(true);
        for lib in std::iter::once(&petsc).chain(mpi.as_ref()) {
            for dir in &lib.include_paths {
                build.include(dir);
            }
        }
        build.compile("petsc_shim");
    }

    fn probe(names: &[&str]) -> pkg_config::Library {
        match probe_optional(names) {
            Some(lib) => lib,
            None => {
                panic!("\n\nPETSc was not found by pkg-config (tried {names:?}).\n{INSTALL}\n\n")
            }
        }
    }

    fn probe_optional(names: &[&str]) -> Option<pkg_config::Library> {
        names
            .iter()
            .find_map(|n| pkg_config::Config::new().probe(n).ok())
    }
}
