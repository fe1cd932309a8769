"""A study's barrierless associations (``[[association]]``): k(E) by inverse Laplace transform of the
given k_inf(T), then k(T, P) by the master equation (or strong collisions scaled by Troe's beta_c)
and detailed balance. See :mod:`tstrate.physics.inverse_laplace` and
:mod:`tstrate.physics.association`.

Python use::

    from tstrate.io.study import read_study
    from tstrate.study.associations import study_associations

    study = read_study("molecules/oh_so2/study.toml")
    result = study_associations(study)[0]
    result.falloff.k0_m6_per_s / result.reference_k0_m6_per_s      # against the evaluation
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from tstrate.errors import InputError
from tstrate.model import Study
from tstrate.model.settings import AssociationSpec
from tstrate.physics.association import AssociationFalloff, association_falloff
from tstrate.physics.inverse_laplace import AssociationModel, ModifiedArrhenius, association_ilt
from tstrate.physics.unimolecular import reactant_parameters
from tstrate.physics import collisions as coll
from tstrate.study.falloff import bath_parameters
from tstrate.units import number_density_m3


@dataclass(frozen=True)
class AssociationResult:
    """One association of a study.

    spec: what the study asked for; model: the adduct's k(E) (ILT); falloff: k(T, [M]) and its limits
    on temperature_K x pressures (SI); pressure_Pa (n_P,) or None when the study gives [M];
    reference_k0_m6_per_s (n_T,) or None: the evaluated k0 it is compared with; warnings.
    """

    spec: AssociationSpec
    model: AssociationModel = field(repr=False)
    falloff: AssociationFalloff = field(repr=False)
    pressure_Pa: np.ndarray | None = field(repr=False)
    reference_k0_m6_per_s: np.ndarray | None = field(repr=False)
    warnings: tuple[str, ...] = ()

    @property
    def name(self) -> str:
        return self.spec.name

    @property
    def temperature_K(self) -> np.ndarray:
        return self.falloff.temperature_K

    @property
    def k0_ratio(self) -> np.ndarray | None:
        """Computed / evaluated k0 at each temperature, or None."""
        if self.reference_k0_m6_per_s is None:
            return None
        return self.falloff.k0_m6_per_s / self.reference_k0_m6_per_s


def association_result(study: Study, spec: AssociationSpec, bath: coll.LennardJones | None = None) -> AssociationResult:
    """Compute one ``[[association]]`` of ``study``."""
    where = f"association {spec.name!r}"
    t = np.asarray(spec.temperature_K if spec.temperature_K is not None else study.conditions.temperature_K,
                   dtype=float)
    cond = study.conditions
    if not (cond.pressure_Pa.size or cond.number_density_m3.size):
        raise InputError(f"{where} needs pressures (or number densities) in [conditions]", file=study.file,
                         field="conditions.pressure_bar")
    bath = bath or bath_parameters(study)
    adduct = study.species[spec.adduct]
    fragments = tuple(study.species[n] for n in spec.reactants)
    k_inf = ModifiedArrhenius(spec.k_inf_A_m3_per_s, spec.k_inf_temperature_exponent,
                              spec.k_inf_activation_energy_J_per_mol, spec.k_inf_reference_temperature_K)
    try:
        model = association_ilt(adduct, fragments, k_inf, grain_cm1=spec.grain_cm1,
                                max_temperature_K=float(t.max()),
                                energy_above_threshold_cm1=spec.energy_above_threshold_cm1,
                                rotation=spec.adduct_rotation)
    except InputError as exc:
        if exc.file is not None:          # a species file's value (e.g. an adduct above its fragments)
            raise
        index = list(study.sections.get("association") or ()).index(spec)
        key = {"temperature_exponent": "k_inf_temperature_exponent", "rotation": "adduct_rotation"}.get(
            exc.field or "", exc.field)
        raise InputError(f"{where}: {exc.problem}", file=study.file,
                         field=f"association[{index}]" + (f".{key}" if key else ""), hint=exc.hint) from None
    if cond.pressure_Pa.size:
        pressures = np.asarray(cond.pressure_Pa, dtype=float)
        m = number_density_m3(pressures[None, :], t[:, None])
    else:
        pressures = None
        m = np.broadcast_to(np.asarray(cond.number_density_m3, dtype=float), (t.size, cond.number_density_m3.size))
    z = coll.pair_collision_rate_m3_s(t, reactant_parameters(adduct), bath)
    fo = association_falloff(model, t, m, collision_rate_m3_s=z,
                             delta_E_down_J_per_mol=spec.delta_E_down_J_per_mol(t),
                             method=spec.pressure_method)
    warnings = [f"{where}: {w}" for w in model.warnings]
    inf_off = float(np.max(np.abs(fo.k_inf_m3_per_s / k_inf.rate(t) - 1.0)))
    if inf_off > 0.02:
        warnings.append(f"{where}: the high-pressure limit of k(E) misses the given k_inf by up to "
                        f"{100 * inf_off:.1f} % (grain rounding of the wavenumbers); use a finer grain_cm1")
    warnings.append(f"{where}: k(E) by inverse Laplace transform of k_inf (no angular momentum; the adduct's "
                    f"rotation is {spec.adduct_rotation}); valid only as far as k_inf(T) and its exponent are")
    return AssociationResult(spec, model, fo, pressures, spec.reference_k0(t), tuple(warnings))


def study_associations(study: Study) -> tuple[AssociationResult, ...]:
    """Every ``[[association]]`` of ``study``, in file order."""
    specs = study.sections.get("association") or ()
    if not specs:
        return ()
    bath = bath_parameters(study)
    return tuple(association_result(study, spec, bath) for spec in specs)
