"""Design targets: one grammar for the CLI, the Python API and the app.

A target is ``QUANTITY OPERATOR VALUE``::

    M100=1.8MPa±5%        M100=1.7..1.9MPa      E=2.1MPa±0.1MPa      G<=0.8MPa
    G@100C>=0.4MPa        M300>=8MPa            planar@2>=1.1MPa     equibiaxial@1.5<=0.9MPa
    lock>=6               lock(planar)>=4       reserve>=400%        reserve@50%>=350%
    Q(toluene)<=3.5       Q(toluene,chi=0.42)<=3.5
    nu=250..300mol/m3     nu>=120mol/m3

Quantities (evaluated by :mod:`network_models.design` for a network of strand density ν):

* ``G``, ``E`` — small-strain shear / Young's modulus of the model (E = 3G), Pa;
* ``M<e>`` — uniaxial nominal stress at e % elongation (``M100`` at λ = 2, ``M300`` at λ = 4), Pa;
* ``<mode>@<λ>`` — nominal stress at stretch λ in ``uniaxial``, ``planar`` or ``equibiaxial`` tension, Pa;
* any of these may end in ``@<temperature>`` (``G@100C``, ``M100@80C``, ``planar@2@100C``): the same network
  at that temperature instead of the design temperature;
* ``lock`` — the locking (finite-extensibility) stretch in uniaxial tension, or ``lock(<mode>)``;
* ``reserve[@<service elongation>]`` — elongation reserve, **percentage points of elongation between the
  service elongation and the uniaxial lock**: reserve = 100 % × (λ_lock − λ_service), λ_service = 1 + e_service
  (e_service = 0 % when not given, so ``reserve>=400%`` means λ_lock ≥ 5).  The lock is an upper bound on the
  elongation at break; real compounds break earlier;
* ``Q(<solvent>[,chi=<χ>])`` — equilibrium volume swelling ratio of the rubber phase, Q = 1/φ (Flory–Rehner,
  affine, with the solvent table's χ unless given);
* ``nu`` (also ``ν``) — strand density, mol/m³ (a unit is required: mol/m3, mol/dm3, mol/cm3, mol/L, mmol/…): in
  ``netstretch library find`` the compound's headline ν on its stated basis; in a design, ν itself.

Operators: ``=`` needs a tolerance (``±5%``, ``±0.1MPa``) or a range (``1.7..1.9MPa``); ``>=``, ``<=`` (also
``≥``, ``≤``, ``>``, ``<``) are bounds.  A ``±x%`` tolerance is relative to the value, except for ``reserve``
(itself in %), where it is in percentage points (``reserve=400%±50%`` is 350–450 %).  Stresses and moduli
must carry a unit (MPa, kPa, psi, kgf/cm², N/mm²), read by :func:`network_models.units.parse_quantity`;
lock and Q are plain numbers; reserve is in %.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field

from ..constants import celsius
from ..deformation import Mode
from ..errors import UserError
from ..units import parse_number, parse_quantity

__all__ = ["Target", "TargetError", "parse_target", "parse_targets", "EXAMPLES"]

#: one correct example per kind of quantity, quoted in error sentences
EXAMPLES = {
    "G": "G>=0.4MPa", "E": "E=2.1MPa±0.1MPa", "stress": "M100=1.8MPa±5%", "mode": "planar@2>=1.1MPa",
    "lock": "lock>=6", "reserve": "reserve>=400%", "Q": "Q(toluene)<=3.5", "nu": "nu=250..300mol/m3",
}
#: units a strand-density target may be written in (converted to mol/m³)
_NU_UNIT = re.compile(r"^m?mol\s*/\s*(?:[dc]?m(?:3|³|\^3|\*\*3)|l)$", re.IGNORECASE)


class TargetError(UserError):
    """A target string that cannot be read: one sentence naming the target, what is wrong and an example."""


@dataclass(frozen=True)
class Target:
    """One design target, in SI: the acceptable interval [lo, hi] of a quantity (either end may be None)."""

    text: str
    kind: str  # "G" | "E" | "stress" | "lock" | "reserve" | "Q" | "nu"
    lo: float | None
    hi: float | None
    nominal: float | None = None
    mode: Mode | None = None
    stretch: float | None = None  # stress targets: λ; reserve: λ_service
    temperature: float | None = None  # K; None = the design temperature
    solvent: str | None = None
    chi: float | None = None
    name: str = ""  # short name of the quantity, e.g. "M100", "G@100C", "lock", "Q(toluene)"
    extras: dict = field(default_factory=dict, compare=False, hash=False)

    # ----- display --------------------------------------------------------------------------------
    @property
    def unit(self) -> str:
        return {"G": "MPa", "E": "MPa", "stress": "MPa", "reserve": "%", "nu": "mol/m³"}.get(self.kind, "")

    @property
    def scale(self) -> float:
        """SI value × scale = display value."""
        return {"G": 1e-6, "E": 1e-6, "stress": 1e-6, "reserve": 100.0}.get(self.kind, 1.0)

    def fmt(self, value: float | None, digits: int = 3) -> str:
        if value is None or not math.isfinite(value):
            return "—"
        u = self.unit
        return f"{value * self.scale:.{digits}g}" + (f" {u}" if u else "")

    def describe(self) -> str:
        """What the quantity is, in words."""
        at = "" if self.temperature is None else f" at {celsius(self.temperature):.4g} °C"
        if self.kind == "G":
            return "small-strain shear modulus G" + at
        if self.kind == "E":
            return "small-strain Young's modulus E = 3G" + at
        if self.kind == "stress":
            assert self.mode is not None and self.stretch is not None  # parse_target sets both
            return (f"{self.mode.value} nominal stress at λ = {self.stretch:g} "
                    f"({100 * (self.stretch - 1):.4g} % elongation){at}")
        if self.kind == "nu":
            return "strand density ν"
        if self.kind == "lock":
            assert self.mode is not None
            return f"locking stretch in {self.mode.value} tension"
        if self.kind == "reserve":
            assert self.stretch is not None
            return (f"elongation reserve between {100 * (self.stretch - 1):.4g} % service elongation and the "
                    "uniaxial lock, 100 % × (λ_lock − λ_service)")
        chi = f", χ = {self.chi:g}" if self.chi is not None else ""
        return f"equilibrium volume swelling ratio Q = 1/φ in {self.solvent}{chi}"

    def bounds_text(self) -> str:
        if self.lo is not None and self.hi is not None:
            return f"{self.fmt(self.lo, 4)} … {self.fmt(self.hi, 4)}"
        if self.lo is not None:
            return f"≥ {self.fmt(self.lo, 4)}"
        return f"≤ {self.fmt(self.hi, 4)}"

    # ----- how far a value is from the target ---------------------------------------------------
    def _scales(self):
        def s(b):
            return abs(b) if b else 1.0

        return s(self.lo), s(self.hi)

    def margin(self, value: float) -> float:
        """Positive inside the acceptable interval, negative outside (relative to each bound); NaN stays NaN."""
        if value is None or not math.isfinite(value):
            return math.nan
        slo, shi = self._scales()
        out = math.inf
        if self.lo is not None:
            out = min(out, (value - self.lo) / slo)
        if self.hi is not None:
            out = min(out, (self.hi - value) / shi)
        return out

    def miss(self, value: float) -> float:
        """Relative miss: 0 inside, else the distance to the nearest bound over that bound; inf if undefined."""
        m = self.margin(value)
        if not math.isfinite(m):
            return math.inf
        return max(0.0, -m)

    def to_dict(self) -> dict:
        return {"text": self.text, "quantity": self.name, "meaning": self.describe(), "low": self.lo,
                "high": self.hi, "nominal": self.nominal, "unit": "Pa" if self.unit == "MPa" else
                ("1 (fraction; ×100 for %)" if self.kind == "reserve" else
                 "mol/m³" if self.kind == "nu" else "1"),
                "temperature_K": self.temperature,
                **({"hardness": dict(self.extras)} if self.extras.get("hardness") else {})}


# ------------------------------------------------------------------------------------------------
_OP_RE = re.compile(r"(>=|<=|≥|≤|=>|=<|==|=|>|<)")
_MODES = ("uniaxial", "planar", "equibiaxial")


def _fail(text: str, what: str, kind: str = "stress") -> TargetError:
    return TargetError(f"target {text!r}: {what}; write it like {EXAMPLES[kind]!r}.", kind="design-target",
                       fix=EXAMPLES[kind])


def _temperature(text, raw, kind):
    if not re.search(r"[A-Za-z°℃]", raw):
        raise _fail(text, f"the temperature {raw!r} after '@' needs a unit (e.g. 100C or 373K)", kind)
    try:
        T = parse_quantity(raw, "temperature")
    except ValueError as exc:
        raise _fail(text, f"cannot read the temperature {raw!r} ({exc})", kind) from None
    if not T > 0:
        raise _fail(text, f"the temperature {raw!r} is below absolute zero", kind)
    return T


def _quantity(text: str, q: str) -> dict:
    """The quantity part (left of the operator) → fields of :class:`Target`."""
    s = q.strip().replace(" ", "")
    low = s.lower()
    parts = low.split("@")
    head = parts[0]
    if head in ("g", "e"):
        kind = head.upper()
        if len(parts) > 2:
            raise _fail(text, f"{head.upper()} takes one '@temperature' at most", kind)
        T = _temperature(text, parts[1], kind) if len(parts) == 2 else None
        return {"kind": kind, "temperature": T,
                "name": head.upper() + ("@" + parts[1].upper() if len(parts) == 2 else "")}
    m = re.fullmatch(r"m(\d+(?:\.\d+)?)", head)
    if m:
        e = float(m.group(1))
        if not e > 0:
            raise _fail(text, "the elongation after M must be positive (M100 = stress at 100 % elongation)")
        if len(parts) > 2:
            raise _fail(text, "M<elongation> takes one '@temperature' at most")
        T = _temperature(text, parts[1], "stress") if len(parts) == 2 else None
        return {"kind": "stress", "mode": Mode.UNIAXIAL, "stretch": 1.0 + e / 100.0, "temperature": T,
                "name": s.upper()}
    if head in _MODES:
        if len(parts) < 2:
            raise _fail(text, f"say at which stretch, e.g. {head}@2 for the stress at λ = 2", "mode")
        try:
            lam = parse_number(parts[1])
        except ValueError:
            raise _fail(text, f"cannot read the stretch {parts[1]!r} after {head}@ (give λ, e.g. 2)",
                        "mode") from None
        if not (lam > 1.0 and math.isfinite(lam)):
            raise _fail(text, f"the stretch λ = {parts[1]} must be above 1 (tension)", "mode")
        if len(parts) > 3:
            raise _fail(text, "give at most a stretch and a temperature after the mode", "mode")
        T = _temperature(text, parts[2], "mode") if len(parts) == 3 else None
        return {"kind": "stress", "mode": Mode.parse(head), "stretch": lam, "temperature": T, "name": s}
    if head in ("nu", "ν"):
        if len(parts) > 1:
            raise _fail(text, "a strand-density target takes no '@'", "nu")
        return {"kind": "nu", "name": "nu"}
    m = re.fullmatch(r"lock(?:\(([a-z]+)\))?", low)
    if m:
        mode = m.group(1) or "uniaxial"
        if mode not in _MODES:
            raise _fail(text, f"unknown mode {mode!r} in lock(...); use uniaxial, planar or equibiaxial", "lock")
        return {"kind": "lock", "mode": Mode.parse(mode), "name": s}
    if head == "reserve":
        service = 1.0
        if len(parts) == 2:
            try:
                service = 1.0 + parse_quantity(parts[1], "dimensionless")
            except ValueError:
                raise _fail(text, f"cannot read the service elongation {parts[1]!r} (write it in %, "
                                  "e.g. reserve@50%>=350%)", "reserve") from None
            if "%" not in parts[1] or not service >= 1.0:
                raise _fail(text, "give the service elongation in % (0 % or more), e.g. reserve@50%", "reserve")
        elif len(parts) > 2:
            raise _fail(text, "reserve takes one '@service elongation' at most", "reserve")
        return {"kind": "reserve", "mode": Mode.UNIAXIAL, "stretch": service, "name": s}
    m = re.fullmatch(r"q\(([^,()]+)(?:,chi=([^()]+))?\)", low)
    if m:
        chi = None
        if m.group(2) is not None:
            try:
                chi = parse_number(m.group(2))
            except ValueError:
                raise _fail(text, f"cannot read χ = {m.group(2)!r}", "Q") from None
            if not (0.0 <= chi < 1.0):
                raise _fail(text, f"χ = {chi:g} is outside 0–1", "Q")
        return {"kind": "Q", "solvent": m.group(1), "chi": chi, "name": s}
    raise _fail(text, f"unknown quantity {q.strip()!r} (known: G, E, M100/M200/M300…, uniaxial@λ, planar@λ, "
                      "equibiaxial@λ, lock, reserve, Q(solvent), nu)")


def _value(text: str, raw: str, kind: str):
    """A value of the target's kind in SI; for stresses a unit is required."""
    raw = raw.strip()
    if not raw:
        raise _fail(text, "the value is missing", kind)
    if kind in ("G", "E", "stress"):
        if not re.search(r"[A-Za-z]", raw):
            raise _fail(text, f"the stress {raw!r} has no unit (MPa, kPa, psi, kgf/cm² …)", kind)
        try:
            return parse_quantity(raw, "pressure")
        except ValueError as exc:
            raise _fail(text, f"cannot read {raw!r} as a stress ({exc})", kind) from None
    if kind == "nu":
        if not _NU_UNIT.match(_unit_of(raw)):
            raise _fail(text, f"the strand density {raw!r} needs a unit such as mol/m3 (or mol/dm3, mol/cm3)", kind)
        try:
            return parse_quantity(raw)
        except ValueError as exc:
            raise _fail(text, f"cannot read {raw!r} as a strand density ({exc})", kind) from None
    if kind == "reserve":
        if "%" not in raw:
            raise _fail(text, f"give the reserve in % of elongation, not {raw!r}", kind)
        try:
            return parse_quantity(raw, "dimensionless")
        except ValueError as exc:
            raise _fail(text, f"cannot read {raw!r} ({exc})", kind) from None
    try:
        return parse_number(raw)
    except ValueError:
        what = "a stretch (plain number, e.g. 6)" if kind == "lock" else "a plain number, e.g. 3.5"
        raise _fail(text, f"cannot read {raw!r} as {what}", kind) from None


def _unit_of(raw: str) -> str:
    m = re.match(r"^\s*[-+]?(?:\d+(?:[.,]\d*)?|[.,]\d+)(?:[eE][-+]?\d+)?\s*(.*)$", raw)
    return m.group(1).strip() if m else ""


def _equal(text: str, raw: str, kind: str):
    """Right side of '=': a range a..b or a value with a tolerance → (lo, hi, nominal)."""
    if ".." in raw:
        a, b = raw.split("..", 1)
        unit = _unit_of(b)
        if kind in ("G", "E", "stress", "reserve", "nu") and not _unit_of(a):
            a = a + unit
        lo, hi = _value(text, a, kind), _value(text, b, kind)
        if not lo < hi:
            raise _fail(text, f"the range {raw!r} must go from low to high", kind)
        return lo, hi, None
    tol_sep = re.split(r"±|\+/-|\+-", raw)
    if len(tol_sep) != 2:
        raise _fail(text, "'=' needs a tolerance (±5%) or a range (1.7..1.9MPa)", kind)
    v_raw, t_raw = tol_sep[0].strip(), tol_sep[1].strip()
    t_unit = _unit_of(t_raw)
    if t_unit == "%" and kind != "reserve":
        v = _value(text, v_raw, kind)
        tol = abs(v) * parse_number(t_raw.replace("%", "")) / 100.0
    else:
        if kind in ("G", "E", "stress", "nu") and not _unit_of(v_raw):
            v_raw = v_raw + t_unit  # "1.8±0.1MPa"
        if kind in ("G", "E", "stress", "reserve", "nu") and not t_unit:
            t_raw = t_raw + _unit_of(v_raw)
        v = _value(text, v_raw, kind)
        tol = abs(_value(text, t_raw, kind))
    if not tol > 0:
        raise _fail(text, "a tolerance of zero cannot give a window; give a positive one", kind)
    return v - tol, v + tol, v


def _split_op(s: str):
    """(quantity, operator, value) at the first operator outside parentheses (Q(toluene,chi=0.4) has one inside)."""
    for m in _OP_RE.finditer(s):
        before = s[: m.start()]
        if before.count("(") == before.count(")"):
            return before, m.group(1), s[m.end():]
    return None


def parse_target(text) -> Target:
    """Read one target string (see the module doc); :class:`TargetError` with a sentence otherwise."""
    if isinstance(text, Target):
        return text
    s = str(text).strip().replace("\u2212", "-")
    if not s:
        raise TargetError("an empty target was given; write e.g. 'M100=1.8MPa±5%'.", kind="design-target")
    from ..hardness import rewrite_target  # hardness=60..65ShoreA → the E target it stands for (Gent 1958)

    hard = rewrite_target(s)
    if hard is not None:
        t = parse_target(hard[0])
        return Target(text=s, lo=t.lo, hi=t.hi, nominal=t.nominal, kind=t.kind, name="E (from Shore A)",
                      extras=hard[1])
    parts = _split_op(s)
    if parts is None or not parts[0].strip():
        raise _fail(s, "it has no comparison (=, >= or <=)")
    q, op, raw = parts
    fields = _quantity(s, q)
    kind = fields["kind"]
    op = {"≥": ">=", "=>": ">=", "≤": "<=", "=<": "<=", "==": "=", ">": ">=", "<": "<="}.get(op, op)
    if _OP_RE.search(raw):
        raise _fail(s, "it has more than one comparison", kind)
    nominal = None
    if op == "=":
        lo, hi, nominal = _equal(s, raw, kind)
    else:
        if "±" in raw or ".." in raw:
            raise _fail(s, f"a bound ({op}) takes one value, without a tolerance or range", kind)
        v = _value(s, raw, kind)
        lo, hi = (v, None) if op == ">=" else (None, v)
    for b in (lo, hi):
        if b is not None and not math.isfinite(b):
            raise _fail(s, "the value is not a finite number", kind)
    if kind in ("G", "E", "stress", "nu") and ((lo is not None and lo < 0) or (hi is not None and hi <= 0)):
        raise _fail(s, "a tensile stress or modulus target must be positive", kind)
    if kind == "lock" and ((hi is not None and hi <= 1.0) or (lo is not None and lo < 1.0)):
        raise _fail(s, "a locking stretch is above 1", kind)
    if kind == "Q" and ((hi is not None and hi <= 1.0) or (lo is not None and lo < 1.0)):
        raise _fail(s, "a swelling ratio Q = 1/φ is above 1", kind)
    return Target(text=s, lo=lo, hi=hi, nominal=nominal, **fields)


def parse_targets(texts) -> list[Target]:
    """Several targets (strings or :class:`Target`); at least one; the same quantity twice is refused."""
    if isinstance(texts, (str, Target)):
        texts = [texts]
    out = [parse_target(t) for t in texts if not (isinstance(t, str) and not t.strip())]
    if not out:
        raise TargetError("no design target was given; add one such as 'M100=1.8MPa±5%'.", kind="design-target")
    seen: dict = {}
    for t in out:
        key = (t.kind, t.mode, t.stretch, t.temperature, t.solvent)
        if key in seen:
            raise TargetError(f"targets {seen[key]!r} and {t.text!r} constrain the same quantity; combine them into "
                              "one, e.g. 'M100=1.7..1.9MPa'.", kind="design-target")
        seen[key] = t.text
    return out
