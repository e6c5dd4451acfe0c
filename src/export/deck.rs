//! Input decks for quantum-chemistry codes (ORCA, Gaussian, xTB, CP2K): the exported geometry
//! with the cage's charge and spin multiplicity and one user-editable method line, so a
//! shortlist goes straight into a geometry optimisation.
//!
//! Each generator takes the charge and multiplicity as parameters (the export of cages passes
//! the asked charge and [`multiplicity`], of derivatives the molecule's own); nothing here knows
//! where they come from. Atoms are carbon unless [`Job::elements`] names them (derivatives).
//! Decks are kept minimal: only what the code needs to run the job, in the form its manual
//! gives. Choosing the method is the user's business; the defaults ([`Code::default_method`])
//! are cheap, common choices for a first optimisation, not recommendations for production.

use std::fmt::Write as _;

/// A quantum-chemistry code an input deck is written for.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Code {
    Orca,
    Gaussian,
    Xtb,
    Cp2k,
}

impl Code {
    pub fn name(self) -> &'static str {
        match self {
            Code::Orca => "orca",
            Code::Gaussian => "gaussian",
            Code::Xtb => "xtb",
            Code::Cp2k => "cp2k",
        }
    }

    /// The method text used when the user gives none:
    /// - ORCA: the simple-input line after `!`: r2SCAN-3c, a composite method with its own basis
    ///   and dispersion correction (Grimme et al., J. Chem. Phys. 154 (2021) 064103), and `Opt`.
    /// - Gaussian: the route after `#`: B3LYP/6-31G(d) with Grimme's D3(BJ) dispersion, `Opt`.
    /// - xTB: command-line options: GFN2-xTB (Bannwarth, Ehlert, Grimme, J. Chem. Theory Comput.
    ///   15 (2019) 1652) geometry optimisation.
    /// - CP2K: three words, functional, basis set and pseudopotential (Gaussian and plane waves
    ///   with GTH pseudopotentials); D3(BJ) dispersion is always added. The pseudopotential
    ///   named is carbon's; a derivative's other elements get the same name with their own
    ///   valence (`GTH-PBE-q4` becomes `GTH-PBE-q1` for H).
    pub fn default_method(self) -> &'static str {
        match self {
            Code::Orca => "r2SCAN-3c Opt",
            Code::Gaussian => "B3LYP/6-31G(d) EmpiricalDispersion=GD3BJ Opt",
            Code::Xtb => "--gfn 2 --opt",
            Code::Cp2k => "PBE DZVP-MOLOPT-SR-GTH GTH-PBE-q4",
        }
    }

    /// What a method text looks like for this code, for error messages.
    fn method_form(self) -> &'static str {
        match self {
            Code::Orca => "ORCA keywords such as \"B3LYP D3BJ def2-SVP Opt\"",
            Code::Gaussian => "a Gaussian route such as \"B3LYP/def2SVP EmpiricalDispersion=GD3BJ Opt\"",
            Code::Xtb => "xtb options such as \"--gfn 2 --opt\"",
            Code::Cp2k => "three words: functional, basis set, pseudopotential, such as \"PBE DZVP-MOLOPT-SR-GTH GTH-PBE-q4\"",
        }
    }
}

/// Spin multiplicity of the lowest spin state a cage of `atoms` carbons with charge `charge`
/// can have: a singlet for an even electron count, a doublet for an odd one (6 electrons per
/// carbon atom, minus the charge). Higher spin states are the user's choice.
pub fn multiplicity(atoms: usize, charge: i32) -> u32 {
    let electrons = 6 * atoms as i64 - i64::from(charge);
    if electrons.rem_euclid(2) == 1 {
        2
    } else {
        1
    }
}

/// Checks a user's method text for `code`: one line of printable characters, non-empty, and for
/// CP2K exactly three words. Returns the trimmed text or a one-line reason.
pub fn check_method(code: Code, text: &str) -> Result<String, String> {
    let t = text.trim();
    let bad = t.is_empty()
        || t.chars().any(char::is_control)
        || (code == Code::Cp2k && t.split_whitespace().count() != 3)
        || (code == Code::Xtb && t.contains(['"', '\'', '`', '$', ';', '&', '|', '<', '>', '\\']));
    if bad {
        return Err(format!(
            "--method for {} must be {}",
            code.name(),
            code.method_form()
        ));
    }
    Ok(t.to_string())
}

/// Everything a deck needs about one structure.
#[derive(Debug, Clone, Copy)]
pub struct Job<'a> {
    /// File stem shared by the structure's files (e.g. `C84_IPR-23`).
    pub stem: &'a str,
    /// One line saying what the structure is, used as title or comment.
    pub title: &'a str,
    pub coords: &'a [[f64; 3]],
    /// Element symbol of each atom (derivatives); empty means every atom is carbon.
    pub elements: &'a [&'a str],
    pub charge: i32,
    pub multiplicity: u32,
    /// Checked with [`check_method`].
    pub method: &'a str,
}

/// One file of a deck: its name and text.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct DeckFile {
    pub name: String,
    pub text: String,
}

/// The names of the files of `code`'s deck for the structure with file stem `stem`.
pub fn file_names(code: Code, stem: &str) -> Vec<String> {
    match code {
        Code::Orca => vec![format!("{stem}.orca.inp")],
        Code::Gaussian => vec![format!("{stem}.gjf")],
        Code::Xtb => vec![format!("{stem}.xcontrol"), format!("{stem}.xtb.sh")],
        Code::Cp2k => vec![format!("{stem}.cp2k.inp")],
    }
}

/// The files of `code`'s deck for `job`, named as [`file_names`] says. xTB reads the geometry
/// from `{stem}.xyz`, which the caller writes as well.
pub fn deck(code: Code, job: &Job) -> Vec<DeckFile> {
    let texts = match code {
        Code::Orca => vec![orca(job)],
        Code::Gaussian => vec![gaussian(job)],
        Code::Xtb => vec![xcontrol(job), xtb_script(job)],
        Code::Cp2k => vec![cp2k(job)],
    };
    file_names(code, job.stem)
        .into_iter()
        .zip(texts)
        .map(|(name, text)| DeckFile { name, text })
        .collect()
}

fn atom_lines(out: &mut String, job: &Job, indent: &str) {
    for (i, c) in job.coords.iter().enumerate() {
        let _ = writeln!(
            out,
            "{indent}{} {:>14.8} {:>14.8} {:>14.8}",
            element(job, i),
            c[0],
            c[1],
            c[2]
        );
    }
}

fn element<'a>(job: &Job<'a>, i: usize) -> &'a str {
    job.elements.get(i).copied().unwrap_or("C")
}

/// The distinct elements of a job in order of first appearance (carbon first for cages).
fn kinds<'a>(job: &Job<'a>) -> Vec<&'a str> {
    let mut out: Vec<&str> = Vec::new();
    for i in 0..job.coords.len() {
        let e = element(job, i);
        if !out.contains(&e) {
            out.push(e);
        }
    }
    out
}

/// Valence electrons of the GTH pseudopotentials of the elements a derivative holds (the `qN`
/// in their names: GTH-PBE-q1 for H, q3 for B, q4 for C, q5 for N, q7 for F and Cl; Goedecker,
/// Teter & Hutter, Phys. Rev. B 54 (1996) 1703, and Krack, Theor. Chem. Acc. 114 (2005) 145,
/// from memory).
fn gth_valence(element: &str) -> Option<u32> {
    match element {
        "H" => Some(1),
        "B" => Some(3),
        "C" => Some(4),
        "N" => Some(5),
        "F" | "Cl" => Some(7),
        _ => None,
    }
}

/// The pseudopotential of `element` given the carbon one the method names: a name ending in
/// `-qN` gets the element's valence in place of N (`GTH-PBE-q4` gives `GTH-PBE-q1` for H);
/// any other name is used for every element as written.
fn potential_for(element: &str, carbon: &str) -> String {
    let stem = carbon
        .rsplit_once("-q")
        .filter(|(_, q)| !q.is_empty() && q.bytes().all(|b| b.is_ascii_digit()));
    match (stem, gth_valence(element)) {
        (Some((stem, _)), Some(q)) => format!("{stem}-q{q}"),
        _ => carbon.to_string(),
    }
}

/// The title on one line, without characters that start a new section or comment in any of
/// the decks.
fn clean(title: &str) -> String {
    title
        .chars()
        .map(|c| {
            if c.is_control() || c == '!' || c == '#' || c == '@' {
                ' '
            } else {
                c
            }
        })
        .collect::<String>()
        .trim()
        .to_string()
}

/// ORCA: `#` comment, the `!` simple-input line, then `* xyz charge multiplicity` ... `*`
/// (ORCA manual, "Input of coordinates").
pub fn orca(job: &Job) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "# {}", clean(job.title));
    let _ = writeln!(s, "! {}", job.method);
    let _ = writeln!(s);
    let _ = writeln!(s, "* xyz {} {}", job.charge, job.multiplicity);
    atom_lines(&mut s, job, "  ");
    let _ = writeln!(s, "*");
    s
}

/// Gaussian: route section (`#` line), blank line, title, blank line, `charge multiplicity`,
/// Cartesian coordinates, and the blank line that ends the molecule specification (Gaussian
/// manual, "Input summary").
pub fn gaussian(job: &Job) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "# {}", job.method);
    let _ = writeln!(s);
    let title = clean(job.title);
    let _ = writeln!(s, "{}", if title.is_empty() { "cage" } else { &title });
    let _ = writeln!(s);
    let _ = writeln!(s, "{} {}", job.charge, job.multiplicity);
    atom_lines(&mut s, job, "");
    let _ = writeln!(s);
    s
}

/// xTB detailed input: `$chrg` is the molecular charge and `$spin` the number of unpaired
/// electrons, multiplicity - 1 (xtb documentation, "Detailed input").
pub fn xcontrol(job: &Job) -> String {
    format!(
        "$chrg {}\n$spin {}\n$end\n",
        job.charge,
        job.multiplicity.saturating_sub(1)
    )
}

/// The command line that runs xTB on the structure with its detailed input.
pub fn xtb_script(job: &Job) -> String {
    format!(
        "#!/bin/sh\n# {}\n# charge {} and unpaired electrons {} are set in {stem}.xcontrol; edit the options to change the method.\ncd \"$(dirname \"$0\")\" || exit 1\nexec xtb {stem}.xyz --input {stem}.xcontrol {}\n",
        clean(job.title),
        job.charge,
        job.multiplicity.saturating_sub(1),
        job.method,
        stem = job.stem
    )
}

/// Vacuum around the cage in a CP2K cell, Å: the isolated-molecule (wavelet) Poisson solver
/// needs the density to vanish at the cell faces (common practice, no source).
const CP2K_VACUUM: f64 = 8.0;

/// CP2K: a non-periodic Gaussian-and-plane-waves geometry optimisation with D3(BJ) dispersion;
/// the method's three words become `@SET` variables at the top, so they can be edited in one
/// place (CP2K input reference: GLOBAL, FORCE_EVAL/DFT, SUBSYS).
pub fn cp2k(job: &Job) -> String {
    let words: Vec<&str> = job.method.split_whitespace().collect();
    let (functional, basis, potential) = match words.as_slice() {
        [f, b, p] => (*f, *b, *p),
        _ => {
            let d: Vec<&str> = Code::Cp2k.default_method().split_whitespace().collect();
            (d[0], d[1], d[2])
        }
    };
    let extent = (0..3)
        .map(|k| {
            let lo = job
                .coords
                .iter()
                .map(|c| c[k])
                .fold(f64::INFINITY, f64::min);
            let hi = job
                .coords
                .iter()
                .map(|c| c[k])
                .fold(f64::NEG_INFINITY, f64::max);
            if hi >= lo {
                hi - lo
            } else {
                0.0
            }
        })
        .fold(0.0, f64::max);
    let cell = (extent + 2.0 * CP2K_VACUUM).ceil();
    let mut s = String::new();
    let _ = writeln!(s, "# {}", clean(job.title));
    let _ = writeln!(s, "@SET FUNCTIONAL {functional}");
    let _ = writeln!(s, "@SET BASIS {basis}");
    let _ = writeln!(s, "@SET POTENTIAL {potential}");
    let _ = writeln!(s);
    let _ = writeln!(
        s,
        "&GLOBAL\n  PROJECT {}\n  RUN_TYPE GEO_OPT\n  PRINT_LEVEL LOW\n&END GLOBAL",
        job.stem
    );
    let _ = writeln!(s, "&FORCE_EVAL\n  METHOD QS\n  &DFT");
    let _ = writeln!(
        s,
        "    BASIS_SET_FILE_NAME BASIS_MOLOPT\n    POTENTIAL_FILE_NAME GTH_POTENTIALS"
    );
    let _ = writeln!(
        s,
        "    CHARGE {}\n    MULTIPLICITY {}",
        job.charge, job.multiplicity
    );
    if job.multiplicity > 1 {
        let _ = writeln!(s, "    UKS .TRUE.");
    }
    let _ = writeln!(
        s,
        "    &MGRID\n      CUTOFF 400\n      REL_CUTOFF 50\n    &END MGRID"
    );
    let _ = writeln!(
        s,
        "    &POISSON\n      PERIODIC NONE\n      PSOLVER WAVELET\n    &END POISSON"
    );
    let _ = writeln!(s, "    &SCF\n      SCF_GUESS ATOMIC\n      EPS_SCF 1.0E-6\n      MAX_SCF 50\n      &OT\n        MINIMIZER DIIS\n        PRECONDITIONER FULL_SINGLE_INVERSE\n      &END OT\n      &OUTER_SCF\n        EPS_SCF 1.0E-6\n        MAX_SCF 20\n      &END OUTER_SCF\n    &END SCF");
    let _ = writeln!(s, "    &XC\n      &XC_FUNCTIONAL ${{FUNCTIONAL}}\n      &END XC_FUNCTIONAL\n      &VDW_POTENTIAL\n        POTENTIAL_TYPE PAIR_POTENTIAL\n        &PAIR_POTENTIAL\n          TYPE DFTD3(BJ)\n          PARAMETER_FILE_NAME dftd3.dat\n          REFERENCE_FUNCTIONAL ${{FUNCTIONAL}}\n        &END PAIR_POTENTIAL\n      &END VDW_POTENTIAL\n    &END XC");
    let _ = writeln!(s, "  &END DFT\n  &SUBSYS\n    &CELL\n      ABC {cell:.1} {cell:.1} {cell:.1}\n      PERIODIC NONE\n    &END CELL\n    &TOPOLOGY\n      &CENTER_COORDINATES\n      &END CENTER_COORDINATES\n    &END TOPOLOGY\n    &COORD");
    atom_lines(&mut s, job, "      ");
    let _ = writeln!(s, "    &END COORD");
    for kind in kinds(job) {
        let potential = if kind == "C" {
            "${POTENTIAL}".to_string()
        } else {
            potential_for(kind, potential)
        };
        let _ = writeln!(
            s,
            "    &KIND {kind}\n      BASIS_SET ${{BASIS}}\n      POTENTIAL {potential}\n    &END KIND"
        );
    }
    let _ = writeln!(s, "  &END SUBSYS\n&END FORCE_EVAL");
    s
}
