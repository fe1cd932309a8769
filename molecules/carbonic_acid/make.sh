#!/usr/bin/env bash
# Regenerate the carbonic-acid demo species by the semi-empirical route (GFN2-xTB).
# Usage: bash molecules/carbonic_acid/make.sh   (from anywhere; about a minute on 2 cores)
# Results are cached (TSTRATE_CACHE or ~/.cache/tstrate), so a rerun is instant.
set -euo pipefail
cd "$(dirname "$0")"
T=${TSTRATE:-tstrate}
Q=(--quiet --force)

# minima from SMILES (lowest of 10 ETKDG conformers) or from a starting geometry
$T compute minimum --smiles 'OC(=O)O' --name H2CO3 -o h2co3.toml "${Q[@]}"
$T compute minimum --smiles 'O=C=O' --name CO2 -o co2.toml "${Q[@]}"
$T compute minimum --smiles 'O' --name H2O -o h2o.toml "${Q[@]}"
$T compute minimum --geometry inputs/water_dimer_guess.xyz --name '(H2O)2' -o water_dimer.toml "${Q[@]}"

# H2CO3 -> CO2 + H2O: bare four-centre TS (from the cis-trans conformer), one- and
# two-water relay TSs with their pre-reactive ring complexes and downhill product complexes
$T compute relay --waters 0 --name TS-H2CO3 --complex-name H2CO3-cis-trans \
    -o ts_bare.toml --complex-output h2co3_cis_trans.toml --product-output co2_h2o_complex.toml "${Q[@]}"
$T compute relay --waters 1 --name TS-H2CO3.H2O --complex-name H2CO3.H2O \
    -o ts_one_water.toml --complex-output h2co3_h2o.toml --product-output co2_2h2o_complex.toml "${Q[@]}"
$T compute relay --waters 2 --name 'TS-H2CO3.(H2O)2' --complex-name 'H2CO3.(H2O)2' \
    -o ts_two_water.toml --complex-output h2co3_2h2o.toml --product-output co2_3h2o_complex.toml "${Q[@]}"

# collision parameters for falloff (an estimate, not computed: see README.md)
sed -i '/^lennard_jones = /d; /^optical_isomers = /a lennard_jones = { sigma_A = 4.2, epsilon_K = 400.0 }   # ESTIMATE (HONO2-like values, see README.md), added by make.sh' h2co3.toml

# energies refined at the default level (wB97X-D3BJ/def2-TZVP, density fitting) with PySCF:
# the GFN2-xTB files above stay as they are; refined/ holds copies with a single_point
# (about 2 minutes on one core); study.toml uses refined/, study_gfn2.toml the GFN2 files
$T compute refine h2co3.toml h2co3_cis_trans.toml co2.toml h2o.toml water_dimer.toml \
    ts_bare.toml co2_h2o_complex.toml h2co3_h2o.toml ts_one_water.toml co2_2h2o_complex.toml \
    h2co3_2h2o.toml ts_two_water.toml co2_3h2o_complex.toml --output-dir refined "${Q[@]}"
