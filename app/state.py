"""Session state and logic of the browser app, with no Panel import.

Every browser session gets its own :class:`NetworkState`, :class:`DataState` and :class:`SwellState`
(made by ``app.main.create_app``); nothing here is module-level mutable state.  The views in
``app/explorer.py``, ``app/data_view.py``, ``app/fit_panel.py`` and ``app/swell_view.py`` are thin: they build
widgets from these parameters and draw what these methods return.

Units: the core is SI; the state keeps what the user types in trade units (°C for temperature,
mol/m³ for the strand density ν) and converts once, in :meth:`NetworkState.network`.
"""

from __future__ import annotations

import contextlib

import numpy as np
import param

from network_models import MODELS, MODES, Mode, Network, get_model, polymers
from network_models.constants import (
    CAUTION,  # noqa: F401 (the one caution sentence; views import it here)
    ZERO_CELSIUS,
)
from network_models.entanglement import G_E_POLICY
from network_models.materials import temperature_notices
from network_models.network import N_MIN
from network_models.params import FUNCTIONALITY, STRAND_DENSITY, TEMPERATURE, kuhn_number_param
from network_models.thermo import force_at_fixed_length, inversion_strain

#: Our own colour per model (fixed, so a model keeps its colour in every plot and every session).
MODEL_COLOURS = {m.name: m.colour for m in MODELS.values()}
#: Marker colours of the data curves (one per specimen curve, cycled), apart from the model colours.
DATA_COLOURS = ("#111111", "#8a5a00", "#0f7c8c", "#a0307a", "#5f6f00", "#4b5a66", "#6d4c9f", "#b04a2f")

DEFAULT_MODELS = ["affine", "phantom", "eight-chain", "non-affine-tube", "extended-tube", "slip-tube"]


_K0 = ZERO_CELSIUS
_KUHN = kuhn_number_param()


def model_colour(name: str) -> str:
    return MODEL_COLOURS.get(name, "#555555")


def fmt(value, digits: int = 3, unit: str = "") -> str:
    """A number with ``digits`` significant digits (never a bare NaN: a dash instead)."""
    if value is None or not np.isfinite(value):
        return "—"
    text = f"{value:.{digits}g}"
    return f"{text} {unit}".rstrip()


def sig(value, digits: int = 4) -> str:
    """``digits`` significant digits in plain positional notation (no e+03 in tables a compounder reads): the
    project's one number formatter, :func:`network_models.formatting.number`, shared with the report."""
    from network_models.formatting import number

    return number(value, digits)


def polymer_label(key: str) -> str:
    p = polymers()[key]
    flag = "values from memory — check before relying on them" if p.status == "memory" else "values read in source"
    return f"{key} — {p.title} ({flag})"


class NetworkState(param.Parameterized):
    """The network the explorer draws: what a compounder sets, in the units they think in."""

    polymer = param.Selector(default="NR", objects=list(polymers()), doc="polymer (from polymers.toml)")
    nu = param.Number(
        default=STRAND_DENSITY.default, bounds=STRAND_DENSITY.bounds, softbounds=STRAND_DENSITY.typical,
        label="Strand density ν (mol/m³)", doc=STRAND_DENSITY.meaning,
    )
    couple_N = param.Boolean(default=True, label="N from ν and the polymer's Kuhn molar mass",
                             doc="coupled: N = M_c / M_K; free: N set by hand")
    N_free = param.Number(default=_KUHN.default, bounds=(N_MIN, _KUHN.bounds[1]), softbounds=_KUHN.typical,
                          label="Kuhn segments per strand N (free)")
    T_C = param.Number(
        default=TEMPERATURE.default - _K0, bounds=(TEMPERATURE.bounds[0] - _K0, TEMPERATURE.bounds[1] - _K0),
        softbounds=(TEMPERATURE.typical[0] - _K0, TEMPERATURE.typical[1] - _K0), label="Temperature (°C)",
    )
    f = param.Number(default=FUNCTIONALITY.default, bounds=FUNCTIONALITY.bounds, softbounds=FUNCTIONALITY.typical,
                     step=1.0, label="Junction functionality f")
    # Guth–Gold is stated for modest, weakly reinforcing filler: network.guth_gold accepts [0, 0.5).
    filler = param.Number(default=0.0, bounds=(0.0, 0.45), softbounds=(0.0, 0.3), step=0.01,
                          label="Filler volume fraction φ")
    entanglements = param.Boolean(default=True, label="Entanglement contribution G_e (added to every model)")
    models = param.ListSelector(default=list(DEFAULT_MODELS), objects=list(MODELS), label="Models shown")
    lam_max = param.Number(default=5.0, bounds=(1.2, 20.0), softbounds=(1.5, 12.0), label="Largest stretch λ")
    lam_follows_data = param.Boolean(default=True, label="Stretch axis reaches the largest data stretch",
                                     doc="on: the curves run to the largest stretch of the shown data when it "
                                         "exceeds 'largest stretch'")
    data_lam_max = param.Number(default=None, allow_None=True, doc="largest stretch of the data shown (set by "
                                                                   "the data view), λ")
    clamp_stretch = param.Number(default=1.5, bounds=(1.001, 10.0), softbounds=(1.01, 4.0),
                                 label="Clamped stretch for force vs T")
    expansion = param.Boolean(default=True, label="Thermal expansion on (shows the thermoelastic inversion)")

    n_points = 400

    # ----- the network ------------------------------------------------------------------------
    @property
    def T(self) -> float:
        return self.T_C + _K0

    def network(self, **changes) -> Network:
        """The :class:`Network` for the current settings (``changes`` override ν or T, SI);
        ``ValueError`` with a plain sentence if impossible."""
        kw = dict(polymer=self.polymer, nu=float(self.nu), T=self.T, f=float(self.f),
                  filler_fraction=float(self.filler), entanglements=bool(self.entanglements))
        if not self.couple_N:
            kw["N"] = float(self.N_free)
        kw.update(changes)
        return Network(**kw)

    def selected_models(self):
        return [get_model(n) for n in self.models if n in MODELS]

    def lam_shown(self) -> float:
        """The largest stretch drawn: 'largest stretch', or a little past the data when they reach further."""
        hi = float(self.lam_max)
        if self.lam_follows_data and self.data_lam_max is not None and np.isfinite(self.data_lam_max):
            hi = max(hi, 1.03 * float(self.data_lam_max))
        return hi

    def lam_grid(self, lo=1.0) -> np.ndarray:
        return np.linspace(lo, self.lam_shown(), self.n_points)

    # ----- force–stretch ------------------------------------------------------------------------
    def stress_curves(self, net: Network | None = None) -> dict:
        """For each mode: ``{"lam": λ, <model>: nominal stress in MPa (NaN past lock / mode not defined)}``
        and ``locks[mode][model]`` = locking stretch (or None)."""
        net = net or self.network()
        lam = self.lam_grid()
        out, locks = {}, {}
        for mode in MODES:
            cols = {"lam": lam}
            lk = {}
            for name in MODELS:
                m = get_model(name)
                if name not in self.models or not m.supports(mode):
                    cols[name] = np.full_like(lam, np.nan)
                    lk[name] = None
                    continue
                p = net.model_params(m)
                cols[name] = m.nominal_stress(mode, lam, p) / 1e6
                lk[name] = m.stretch_limit(mode, p)
            out[mode.value] = cols
            locks[mode.value] = lk
        return {"curves": out, "locks": locks}

    def mooney_curves(self, net: Network | None = None) -> dict:
        """Uniaxial reduced stress σ* = P/(λ − λ⁻²) in MPa against 1/λ (λ from 1.02 to the largest λ)."""
        net = net or self.network()
        lam = self.lam_grid(1.02)
        cols = {"inv_lam": 1.0 / lam}
        for name in MODELS:
            m = get_model(name)
            if name not in self.models:
                cols[name] = np.full_like(lam, np.nan)
                continue
            cols[name] = m.reduced_stress(lam, net.model_params(m)) / 1e6
        return cols

    # ----- moduli and limits ----------------------------------------------------------------------
    def moduli(self, net: Network | None = None) -> dict[str, float]:
        """Small-strain shear modulus G₀ of each shown model, Pa."""
        net = net or self.network()
        out = {}
        for m in self.selected_models():
            out[m.name] = float(m.small_strain_modulus(**net.model_params(m)))
        return out

    def modulus_vs_nu(self, net: Network | None = None, n: int = 40) -> dict:
        """G₀ (MPa) of each model over the typical strand-density range (log-spaced), other settings fixed."""
        net = net or self.network()
        lo, hi = STRAND_DENSITY.typical
        nus = np.geomspace(min(lo, self.nu), max(hi, self.nu), n)
        cols = {"nu": nus}
        for name in MODELS:
            vals = np.full(n, np.nan)
            if name in self.models:
                m = get_model(name)
                for i, v in enumerate(nus):
                    # N ≤ 1 at very high ν for a coupled N: no network there (the point stays empty)
                    with contextlib.suppress(ValueError):
                        vals[i] = m.small_strain_modulus(**self.network(nu=float(v)).model_params(m)) / 1e6
            cols[name] = vals
        return cols

    def modulus_vs_T(self, net: Network | None = None, n: int = 23) -> dict:
        """G₀ (MPa) of each model from −60 °C to 160 °C at fixed network (entropic: ∝ T)."""
        net = net or self.network()
        Ts = np.linspace(-60.0, 160.0, n) + _K0
        cols = {"T_C": Ts - _K0}
        for name in MODELS:
            vals = np.full(n, np.nan)
            if name in self.models:
                m = get_model(name)
                for i, T in enumerate(Ts):
                    vals[i] = m.small_strain_modulus(**self.network(T=float(T)).model_params(m)) / 1e6
            cols[name] = vals
        return cols

    def force_vs_T(self, net: Network | None = None, n: int = 80) -> dict:
        """Force at the clamped stretch from 0 K to 450 K (Gaussian network): ``F`` per reference area (MPa)
        and, relative to the force at the set temperature, ``F_rel`` (current β), ``F_rel_noexp`` (β = 0)
        and ``F_rel_small`` at half the inversion strain (NaN with expansion off).

        With expansion off the line runs straight through absolute zero (F ∝ T, Meyer & Ferri 1935);
        with expansion on, the polymer's volume expansion coefficient bends it and at small clamped
        strains the force falls with T (thermoelastic inversion)."""
        net = net or self.network()
        beta = net.poly.expansion if self.expansion else 0.0
        T = np.linspace(0.0, 450.0, n)
        lam = float(self.clamp_stretch)
        G, T0 = net.affine_modulus, net.T

        def rel(stretch, b):
            with np.errstate(all="ignore"):
                F = force_at_fixed_length(T, stretch, G, T0, expansion=b)
                return F, F / force_at_fixed_length(T0, stretch, G, T0, expansion=b)

        F, F_rel = rel(lam, beta)
        _, F_rel_noexp = rel(lam, 0.0)
        F_rel_small = np.full_like(T, np.nan)
        eps_small = None
        if beta > 0:
            eps_small = 0.5 * float(inversion_strain(T0, beta))
            _, F_rel_small = rel(1.0 + eps_small, beta)
        return {"T": T, "F": F / 1e6, "F_rel": F_rel, "F_rel_noexp": F_rel_noexp, "F_rel_small": F_rel_small,
                "eps_small": eps_small, "beta": beta}

    def inversion(self, net: Network | None = None) -> float | None:
        """Clamped strain of the thermoelastic inversion at the current T, or None with expansion off."""
        net = net or self.network()
        if not self.expansion:
            return None
        return float(inversion_strain(net.T, net.poly.expansion))

    def limit_rows(self, net: Network | None = None) -> list[dict]:
        """Locking stretch of each shown model in each mode (None = never locks / mode not defined)."""
        net = net or self.network()
        rows = []
        for m in self.selected_models():
            p = net.model_params(m)
            row = {"model": m.title}
            for mode in MODES:
                if not m.supports(mode):
                    row[mode.value] = "not defined"
                    continue
                lk = m.stretch_limit(mode, p)
                row[mode.value] = "no limit" if lk is None else f"{lk:.3g}"
            rows.append(row)
        return rows

    def readout(self, net: Network | None = None) -> dict:
        """The numbers shown beside the controls (SI inside, trade units in the text)."""
        net = net or self.network()
        return {
            "nu": net.nu, "junction_density": net.junction_density, "Mc_g_mol": net.Mc * 1000.0, "N": net.N,
            "N_source": net.N_source, "affine_MPa": net.affine_modulus / 1e6,
            "phantom_MPa": net.phantom_modulus / 1e6, "Ge_MPa": net.entanglement_modulus / 1e6,
            "poisson": net.poisson_ratio, "K_over_G": net.bulk_to_shear,
            "polymer_status": net.poly.status, "polymer_source": net.poly.source,
            "lock_uniaxial": net.locking_stretch(Mode.UNIAXIAL), "ge_policy": G_E_POLICY,
            "model_notices": [str(n) for n in temperature_notices(net.poly, net.T, "network temperature")]
            + [str(n) for m in self.selected_models() for n in net.model_notices(m)],
        }

