"""U.S. Standard Atmosphere 1976 against its published tables; CSV profile reader."""

import numpy as np
import pytest

from tstrate.errors import InputError
from tstrate.io.profiles import read_profile_csv
from tstrate.physics.atmosphere import (LAYER_BASE_PRESSURE_PA, LAYER_BASE_TEMPERATURE_K, R0_M,
                                        us_standard_atmosphere_1976)

# Layer-base pressures at geopotential heights 0, 11, 20, 32, 47, 51, 71, 84.852 km' (Table 4 of
# U.S. Standard Atmosphere 1976, from memory; the first seven cross-checked to 6 digits with a
# published reproduction of the layer table found with the search tool).
TABLE4_P_PA = [101325.0, 22632.06, 5474.889, 868.0187, 110.9063, 66.93887, 3.956420, 0.3733836]
TABLE4_TM_K = [288.15, 216.65, 216.65, 228.65, 270.65, 270.65, 214.65, 186.946]


def test_layer_bases_from_the_hydrostatic_equation():
    np.testing.assert_allclose(LAYER_BASE_PRESSURE_PA, TABLE4_P_PA, rtol=2e-6)
    np.testing.assert_allclose(LAYER_BASE_TEMPERATURE_K, TABLE4_TM_K, atol=1e-3)


# Table I (geometric altitude, metric units) of U.S. Standard Atmosphere 1976.
# 0-51 km: cross-checked with a secondary reproduction found with the search tool (T to 0.01 K,
# p to 5 digits); 70 and 86 km from memory (86 km: 186.87 K, the kinetic temperature, which uses
# M/M0 = 0.999579 of Table 8; the molecular-scale temperature there is 186.946 K).
TABLE1 = [  # (altitude m, T K, p Pa)
    (0.0, 288.150, 1.01325e5),
    (11000.0, 216.774, 2.2700e4),
    (20000.0, 216.650, 5.5293e3),
    (32000.0, 228.490, 8.8906e2),
    (47000.0, 269.682, 1.1585e2),
    (51000.0, 270.650, 7.0458e1),
    (70000.0, 219.585, 5.2209e0),
    (86000.0, 186.87, 3.7338e-1),
]


@pytest.mark.parametrize("z, t, p", TABLE1, ids=[f"{z / 1000:g}km" for z, _, _ in TABLE1])
def test_us_standard_atmosphere_table(z, t, p):
    atm = us_standard_atmosphere_1976(z)
    # table precision: T to 0.001-0.01 K, p to 5 significant figures
    assert atm.temperature_K[0] == pytest.approx(t, abs=0.006)
    assert atm.pressure_Pa[0] == pytest.approx(p, rel=6e-5)


def test_geopotential_layer_boundary_in_geometric_altitude():
    # the tropopause sits at H = 11 km', i.e. Z = r0 H / (r0 - H)
    z = R0_M * 11000.0 / (R0_M - 11000.0)
    atm = us_standard_atmosphere_1976([z - 1.0, z, z + 1.0])
    assert atm.temperature_K[1] == pytest.approx(216.65, abs=1e-9)
    assert atm.pressure_Pa[1] == pytest.approx(22632.06, rel=2e-6)
    assert np.all(np.diff(atm.pressure_Pa) < 0)


def test_vectorised_and_number_density():
    z = np.linspace(0, 86000, 173)
    atm = us_standard_atmosphere_1976(z)
    assert np.all(np.diff(atm.pressure_Pa) < 0)
    # sea level: p/(kT) = 2.5470e25 m^-3 (Table I number density at 0 m, from memory)
    assert atm.number_density_m3[0] == pytest.approx(2.5470e25, rel=1e-4)
    with pytest.raises(InputError, match="0-86 km"):
        us_standard_atmosphere_1976(90000.0)


def test_read_profile_csv(tmp_path):
    f = tmp_path / "profile.csv"
    f.write_text("# cold dry CO2-rich demo profile\naltitude_km,temperature_K,pressure_bar\n"
                 "0,220,0.006\n\n10,200,0.0025\n20,180,0.0009\n")
    prof = read_profile_csv(f)
    np.testing.assert_allclose(prof.altitude_m, [0, 1e4, 2e4])
    np.testing.assert_allclose(prof.pressure_Pa, [600.0, 250.0, 90.0])
    np.testing.assert_allclose(prof.temperature_K, [220, 200, 180])
    g = tmp_path / "pa.csv"
    g.write_text("temperature_K,altitude_m,pressure_Pa\n250,0,1000\n240,500,900\n")
    np.testing.assert_allclose(read_profile_csv(g).altitude_m, [0, 500])


@pytest.mark.parametrize("text, match", [
    ("altitude_km,temperature_K,pressure_Pa\n0,220,abc\n", r"line 2.*pressure_Pa is not a number"),
    ("altitude_km,temperature_K,pressure_Pa\n0,220,600\n5,210\n", r"line 3.*expected 3 columns"),
    ("altitude_km,temperature_K,pressure_Pa\n0,220,600\n0,210,500\n", r"line 3.*altitudes must increase"),
    ("altitude_km,temperature_K,pressure_Pa\n0,-5,600\n", r"line 2.*must be positive"),
    ("altitude_km,temperature_C,pressure_Pa\n0,20,600\n", r"line 1.*no column among temperature_K"),
    ("altitude_km,temperature_K,pressure_psi\n0,220,1\n", r"no column among pressure_Pa"),
    ("altitude_km,temperature_K,pressure_Pa\n", r"no data rows"),
])
def test_bad_profile_rows(tmp_path, text, match):
    f = tmp_path / "bad.csv"
    f.write_text(text)
    with pytest.raises(InputError, match=match) as info:
        read_profile_csv(f)
    assert info.value.file == str(f)


def test_missing_profile_file(tmp_path):
    with pytest.raises(InputError, match="profile file .CSV. does not exist"):
        read_profile_csv(tmp_path / "nope.csv")


def test_binary_or_folder_profile_is_an_input_error(tmp_path):
    # a user pointing --profile at a binary file or a folder gets a one-line error, not a traceback
    binary = tmp_path / "profile.csv"
    binary.write_bytes(b"altitude_km,temperature_K\n\xd0\xff\x00\x81")
    with pytest.raises(InputError, match="not a text file") as info:
        read_profile_csv(binary)
    assert info.value.file == str(binary)
    with pytest.raises(InputError, match="is a folder"):
        read_profile_csv(tmp_path)
