"""Strain of every sublayer by its stratum's method, and settlement over time.

The one settlement engine of the tool: footing points, map grid points and query
points all pass through :func:`sublayer_strains` and :func:`histories`. Per
sublayer, by the stratum's behaviour:

* granular — elastic strain integration εz = [Δσz − ν(Δσx + Δσy)]/E of the
  superposed Boussinesq stresses with the stratum's *field modulus*
  (:func:`field_modulus`), times the time factor of the stratum's method
  (Schmertmann's C2, Burland & Burbidge's ft; none for the elastic method);
* cohesive — e–log σ' primary consolidation under the sustained Δσz, with the
  degree of consolidation of each sublayer from Terzaghi's equation for the
  actual load profile (:func:`sitesettle.methods.consolidation.sublayer_degree_of_consolidation`),
  secondary compression with Cα after the end of primary, and optionally the
  undrained immediate strain (E_u, ν = 0.5);
* rigid — nothing (the integration stops at its top).

The only footing-specific piece is :func:`own_load_settlement`: the footing's
own load on granular strata by Schmertmann's strain-influence diagram or by
Burland & Burbidge, at the footing's own points. The other footings' load there,
and every load at a map or query point, go through the field methods above.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from sitesettle.columns import GroundColumns
from sitesettle.methods import burland_burbidge as bb
from sitesettle.methods import consolidation as cons
from sitesettle.methods import elastic
from sitesettle.methods import schmertmann as sch
from sitesettle.options import Behaviour, ClaySettlement, Drainage, GranularMethod

#: Poisson's ratio of a saturated clay loaded undrained (common practice: 0.5)
UNDRAINED_POISSON = 0.5
#: Schmertmann's σ'vp is floored here [kPa] for footings at the surface
MIN_PEAK_STRESS = 1.0
#: field modulus from cone resistance, E = factor·qc: the axisymmetric factor of
#: Schmertmann, Hartman & Brown (1978), 2.5, or 2 for the 1970 method (Schmertmann 1970)
FIELD_CONE_FACTOR = {"1978": 2.5, "1970": 2.0}

#: creep-factor families of the granular methods
CREEP_NONE, CREEP_SCHMERTMANN, CREEP_BB = 0, 1, 2


def creep_kinds(methods: np.ndarray) -> np.ndarray:
    """The time-factor family of each granular method name (none, Schmertmann's C2, B&B ft)."""
    m = np.asarray(methods, dtype=object)
    sch_ = np.isin(m, [GranularMethod.SCHMERTMANN.value, GranularMethod.SCHMERTMANN_1970.value])
    return np.where(sch_, CREEP_SCHMERTMANN, np.where(m == "burland_burbidge", CREEP_BB, 0))


def creep_factors(times: np.ndarray, r3: float, r: float) -> np.ndarray:
    """(3, nt) time factor of each creep family at each time (row = family)."""
    t = np.asarray(times, dtype=float)
    return np.vstack(
        [
            np.ones_like(t),
            np.asarray(sch.creep_factor(t)),
            np.asarray(bb.time_factor(t, r3=r3, r=r)),
        ]
    )


@dataclass
class Tables:
    """(n_columns, n_strata) parameter tables of the ground under the columns."""

    behaviour: np.ndarray
    method: np.ndarray
    nu: np.ndarray
    youngs: np.ndarray
    qc: np.ndarray
    sound: np.ndarray
    spt: np.ndarray
    gravel: np.ndarray
    fine: np.ndarray
    sand_sp: np.ndarray
    cc: np.ndarray
    cr: np.ndarray
    e0: np.ndarray
    sp: np.ndarray
    ocr: np.ndarray
    cv: np.ndarray
    ca: np.ndarray
    drainage: np.ndarray
    eu: np.ndarray
    tp_given: np.ndarray
    pore_a: np.ndarray
    names: tuple

    @staticmethod
    def build(gc: GroundColumns, default_method: str) -> Tables:
        def num(name, default=np.nan):
            return gc.parameter(
                lambda s: default if getattr(s, name) is None else float(getattr(s, name))
            )

        return Tables(
            behaviour=gc.parameter(lambda s: str(s.behaviour), dtype=object),
            method=gc.parameter(lambda s: str(s.method or default_method), dtype=object),
            nu=num("poisson", 0.3),
            youngs=num("youngs_modulus"),
            qc=num("cone_resistance"),
            sound=gc.parameter(lambda s: bool(s.use_soundings), dtype=bool),
            spt=num("spt_n"),
            gravel=gc.parameter(lambda s: bool(s.gravel), dtype=bool),
            fine=gc.parameter(lambda s: bool(s.fine_or_silty), dtype=bool),
            sand_sp=num("preconsolidation"),
            cc=num("compression_index"),
            cr=num("recompression_index"),
            e0=num("void_ratio"),
            sp=num("preconsolidation"),
            ocr=num("ocr"),
            cv=num("consolidation_coefficient"),
            ca=num("secondary_index", 0.0),
            drainage=gc.parameter(lambda s: str(s.drainage), dtype=object),
            eu=num("undrained_modulus"),
            tp_given=num("end_of_primary"),
            pore_a=num("pore_pressure_coefficient"),
            names=tuple(s.name for s in gc.variants[0]) if gc.variants else (),
        )


def field_modulus(
    tab: Tables, ground, col, k, x, y, z, spt_modulus: dict[str, float]
) -> np.ndarray:
    """Young's modulus of granular sublayers for elastic strain integration [kPa].

    The stratum's ``youngs_modulus`` where given; else ``FIELD_CONE_FACTOR·qc``
    with qc the stratum's value or, "from soundings", the nearest sounding's at
    the sublayer depth; else (SPT only) the stratum's equivalent modulus from the
    footings' Burland & Burbidge results (``spt_modulus``, NaN when none).
    """
    e = tab.youngs[col, k]
    is70 = (tab.method == GranularMethod.SCHMERTMANN_1970.value)[col, k]  # (the table, then rows)
    factor = np.where(is70, FIELD_CONE_FACTOR["1970"], FIELD_CONE_FACTOR["1978"])
    qc = tab.qc[col, k].copy()
    need = tab.sound[col, k] & np.isnan(e)
    if need.any():
        qc[need] = ground.cone_resistance(x[need], y[need], z[need])
    out = np.where(np.isnan(e), factor * qc, e)
    spt = np.isnan(out)
    if spt.any():
        names = np.array(tab.names, dtype=object)[k[spt]]
        out[spt] = [spt_modulus.get(n, np.nan) for n in names]
    return out


@dataclass
class Sublayers:
    """Sublayers of many columns, flattened, with stresses and strains (arrays of length n).

    Geometry: ``col`` (column index), ``top``, ``bottom`` [m], ``stratum`` (index).
    Stresses [kPa]: ``sig0`` (σ'v0), ``sz``/``t`` (all loads, full service: Δσz and
    T = qΩ/π), ``sz_sust`` (all loads, sustained), ``own_sz``/``own_t``/``own_sust``
    (the column's own footing, 0 for unowned columns).
    Results (final or at unit time factor) [m]: ``gran_own``/``gran_nb`` granular
    settlement on loading, ``und_own``/``und_nb`` undrained clay, and the clay's
    final primary strains ``eps_own``/``eps_tot`` [-]; ``modulus`` [kPa], ``iz``,
    ``creep`` (family), ``method`` (label).
    """

    col: np.ndarray
    top: np.ndarray
    bottom: np.ndarray
    stratum: np.ndarray
    x: np.ndarray
    y: np.ndarray
    owner: np.ndarray
    sig0: np.ndarray | None = None
    sz: np.ndarray | None = None
    t: np.ndarray | None = None
    sz_sust: np.ndarray | None = None
    own_sz: np.ndarray | None = None
    own_t: np.ndarray | None = None
    own_sust: np.ndarray | None = None
    gran_own: np.ndarray | None = None
    gran_nb: np.ndarray | None = None
    und_own: np.ndarray | None = None
    und_nb: np.ndarray | None = None
    eps_own: np.ndarray | None = None
    eps_tot: np.ndarray | None = None
    modulus: np.ndarray | None = None
    iz: np.ndarray | None = None
    creep: np.ndarray | None = None
    method: np.ndarray | None = None

    def __len__(self) -> int:
        return len(self.top)

    @property
    def mid(self) -> np.ndarray:
        return 0.5 * (self.top + self.bottom)

    @property
    def h(self) -> np.ndarray:
        return self.bottom - self.top

    @staticmethod
    def concat(parts: list[Sublayers]) -> Sublayers:
        """The sublayers of all ``parts``, in order.

        The parts are emptied as they are joined (each of their arrays is dropped
        once copied, every field set to None): the memory of the parts and of the
        whole is not held twice. Do not use a part afterwards.
        """
        out = {}
        for k in Sublayers.__dataclass_fields__:
            out[k] = np.concatenate([getattr(p, k) for p in parts])
            for p in parts:
                setattr(p, k, None)
        return Sublayers(**out)

    def take(self, index) -> Sublayers:
        return Sublayers(
            **{
                k: (None if getattr(self, k) is None else getattr(self, k)[index])
                for k in Sublayers.__dataclass_fields__
            }
        )


# --------------------------------------------------------------------------- strains


def sublayer_strains(
    sub: Sublayers,
    tab: Tables,
    ground,
    spt_modulus: dict[str, float],
    *,
    cohesive_immediate: bool,
) -> None:
    """Fill the field-method results of every sublayer of ``sub`` (in place).

    Granular: elastic strain of the own and of the other loads with the field
    modulus (the own part is replaced by :func:`own_load_settlement` where the
    footing's method is Schmertmann or Burland & Burbidge). Cohesive: final
    primary strains of the total and of the own sustained stress, and the
    undrained strain. See the module notes for the equations.
    """
    n = len(sub)
    c, k = sub.col, sub.stratum
    # each comparison made on the (columns × strata) table, then read per sublayer
    gran = (tab.behaviour == Behaviour.GRANULAR.value)[c, k] if n else np.zeros(0, bool)
    coh = (tab.behaviour == Behaviour.COHESIVE.value)[c, k] if n else np.zeros(0, bool)
    h = sub.h
    sub.gran_own = np.zeros(n)
    sub.gran_nb = np.zeros(n)
    sub.und_own = np.zeros(n)
    sub.und_nb = np.zeros(n)
    sub.eps_own = np.zeros(n)
    sub.eps_tot = np.zeros(n)
    sub.modulus = np.full(n, np.nan)
    sub.iz = np.full(n, np.nan)
    sub.creep = np.zeros(n, dtype=int)
    sub.method = np.full(n, "", dtype=object)
    if n == 0:
        return
    nb_sz = sub.sz - sub.own_sz
    nb_t = sub.t - sub.own_t
    if gran.any():
        granular_field(sub, np.flatnonzero(gran), tab, ground, spt_modulus)
    if coh.any():
        m = np.flatnonzero(coh)
        cm, km = c[m], k[m]
        s0 = sub.sig0[m]
        sp = np.where(
            np.isfinite(tab.sp[cm, km]),
            tab.sp[cm, km],
            np.where(np.isfinite(tab.ocr[cm, km]), tab.ocr[cm, km] * s0, s0),
        )
        cc = tab.cc[cm, km]
        cr = np.where(np.isfinite(tab.cr[cm, km]), tab.cr[cm, km], cc)
        e0 = tab.e0[cm, km]
        sub.eps_tot[m] = cons.primary_strain(s0, sub.sz_sust[m], sp, cc, cr, e0)
        sub.eps_own[m] = cons.primary_strain(s0, sub.own_sust[m], sp, cc, cr, e0)
        sub.method[m] = "consolidation"
        eu = tab.eu[cm, km]
        if cohesive_immediate and np.isfinite(eu).any():
            mu = UNDRAINED_POISSON
            hs_o = (1 + mu) * sub.own_t[m] - sub.own_sz[m]
            hs_n = (1 + mu) * nb_t[m] - nb_sz[m]
            und_o = elastic.vertical_strain(sub.own_sz[m], hs_o, eu, mu) * h[m]
            und_n = elastic.vertical_strain(nb_sz[m], hs_n, eu, mu) * h[m]
            sub.und_own[m] = np.where(np.isfinite(eu), und_o, 0.0)
            sub.und_nb[m] = np.where(np.isfinite(eu), und_n, 0.0)
            sub.modulus[m] = eu


#: unloading-reloading modulus of granular soil as a multiple of its loading modulus,
#: for rebound under an excavation or a footing lighter than the soil it replaces
#: (common practice: E_ur ≈ 3 E50, e.g. Schanz, Vermeer & Bonnier 1999, from memory)
UNLOADING_MODULUS_RATIO = 3.0


def granular_field(sub: Sublayers, m: np.ndarray, tab: Tables, ground, spt_modulus) -> None:
    """Elastic strain of the own and the other loads on granular sublayers ``m`` (in place).

    Where a sublayer's own part is NaN (no field modulus was known yet) or ``m``
    is being refreshed, both parts are recomputed; an own part already set by
    the footing's own method (finite) is kept.
    """
    if not len(m):
        return
    c, k = sub.col[m], sub.stratum[m]
    nu = tab.nu[c, k]
    E = field_modulus(tab, ground, c, k, sub.x[m], sub.y[m], sub.mid[m], spt_modulus)
    nb_sz = sub.sz[m] - sub.own_sz[m]
    nb_t = sub.t[m] - sub.own_t[m]
    hs_own = (1 + nu) * sub.own_t[m] - sub.own_sz[m]
    hs_nb = (1 + nu) * nb_t - nb_sz
    # unloading (Δσz < 0) rebounds with the unloading modulus, UNLOADING_MODULUS_RATIO × E
    e_own = np.where(sub.own_sz[m] < 0, UNLOADING_MODULUS_RATIO * E, E)
    e_nb = np.where(nb_sz < 0, UNLOADING_MODULUS_RATIO * E, E)
    own = elastic.vertical_strain(sub.own_sz[m], hs_own, e_own, nu) * sub.h[m]
    keep = np.isfinite(sub.gran_own[m]) & (sub.method[m] != "") & (sub.method[m] != "elastic")
    sub.gran_own[m] = np.where(keep, sub.gran_own[m], own)
    sub.gran_nb[m] = elastic.vertical_strain(nb_sz, hs_nb, e_nb, nu) * sub.h[m]
    sub.modulus[m] = np.where(keep & np.isfinite(sub.modulus[m]), sub.modulus[m], E)
    sub.creep[m] = creep_kinds(tab.method)[c, k]
    sub.method[m] = np.where(keep, sub.method[m], "elastic")


# --------------------------------------------------------------------------- own load


@dataclass
class OwnLoad:
    """Per-footing-point facts of the own-load methods, for the trace (arrays per column)."""

    notes: dict[int, list[str]]
    spt_modulus: dict[str, list[float]]
    #: per footing-point column: the Schmertmann parameters a checker needs
    #: ("dp" Δp [kPa], "c1" C1, "izp" Izp, "sig_p" σ'vp [kPa], "zp" depth of Izp below
    #: the base [m], "factor" E/qc)
    params: dict[int, dict[str, float]] = field(default_factory=dict)


def own_load_settlement(
    sub: Sublayers,
    tab: Tables,
    gc: GroundColumns,
    ground,
    footings,
    q_full: np.ndarray,
    *,
    shape_interpolation: str,
    bb_reading: str = "gross_effective",
) -> OwnLoad:
    """Replace the own granular part of footing-point sublayers by the footing's own method.

    Where the stratum's method is Schmertmann (1978 or 1970), the own settlement
    of each sublayer is C1·Δp·∫Iz dz/E over the sublayer, with E = (E/qc)·qc of the
    footing's diagram (or the stratum's given modulus); where it is Burland &
    Burbidge, the footing point's settlement fs·fl·s_i spread over the sublayers
    inside z1 in proportion to their thickness. The unit time factor (on
    loading) is stored; C2 and ft are applied in :func:`histories`.

    Returns the per-point notes (Δp, C1, Izp…) and the Burland & Burbidge
    equivalent moduli per stratum (the modulus with which elastic strain of the
    footing's own stress over z1 gives the method's settlement).
    """
    notes: dict[int, list[str]] = {}
    spt_mod: dict[str, list[float]] = {}
    params: dict[int, dict[str, float]] = {}
    owned = sub.owner >= 0
    if not owned.any():
        return OwnLoad(notes, spt_mod, params)
    c, k = sub.col, sub.stratum
    # each comparison made on the (columns × strata) table, then read per sublayer
    gran = owned & (tab.behaviour == Behaviour.GRANULAR.value)[c, k]
    is_70 = (tab.method == GranularMethod.SCHMERTMANN_1970.value)[c, k]
    is_sch = gran & ((tab.method == GranularMethod.SCHMERTMANN.value)[c, k] | is_70)
    is_el = gran & (tab.method == GranularMethod.ELASTIC.value)[c, k]
    is_bb = gran & (tab.method == GranularMethod.BURLAND_BURBIDGE.value)[c, k]
    # a footing whose net pressure is not positive (it unloads the ground) rebounds
    # elastically with the unloading modulus: the loading methods do not apply
    loaded = np.zeros(len(sub), dtype=bool)
    owned = sub.owner >= 0
    loaded[owned] = np.asarray(q_full, float)[sub.owner[owned]] > 0
    is_sch &= loaded
    is_bb &= loaded
    sub.method[is_el] = "elastic"
    fw = np.array([f.width for f in footings])
    fd = np.array([f.depth for f in footings])
    lb = np.array([1.0 if f.shape == "circle" else f.length / f.width for f in footings])
    diag78 = sch.diagram(lb, version="1978", interpolation=shape_interpolation)
    diag70 = sch.diagram(lb, version="1970")
    if is_sch.any():
        for ver, dg in (("1978", diag78), ("1970", diag70)):
            m = np.flatnonzero(is_sch & (is_70 == (ver == "1970")))
            if not len(m):
                continue
            fi = sub.owner[m]
            dgi = sch.Diagram(*(np.asarray(a)[fi] if a is not None else None for a in dg))
            cols = c[m]
            dp = q_full[fi]
            zp = fd[fi] + np.asarray(sch.peak_depth(fw[fi], dgi))
            # σ'v0 at the base and at the peak: one value per column (its rows share
            # the column and the footing), looked up once per column
            _, one, back = np.unique(cols, return_index=True, return_inverse=True)
            back = back.ravel()
            sig_base = gc.effective_stress(cols[one], fd[fi][one])[back]
            sig_p = gc.effective_stress(cols[one], zp[one])[back]
            peak = (
                sch.peak_factor(dp, np.maximum(sig_p, MIN_PEAK_STRESS)) if ver == "1978" else None
            )
            integral = sch.influence_integral(
                sub.top[m] - fd[fi], sub.bottom[m] - fd[fi], fw[fi], dgi, peak
            )
            e_given = tab.youngs[cols, k[m]]
            qc = tab.qc[cols, k[m]].copy()
            need = tab.sound[cols, k[m]] & np.isnan(e_given)
            if need.any():
                qc[need] = ground.cone_resistance(sub.x[m][need], sub.y[m][need], sub.mid[m][need])
            E = np.where(np.isnan(e_given), np.asarray(dgi.modulus_factor) * qc, e_given)
            c1 = sch.embedment_factor(sig_base, dp)
            sub.gran_own[m] = c1 * dp * integral / E
            sub.iz[m] = integral / sub.h[m]
            sub.modulus[m] = np.where(integral > 0, E, sub.modulus[m])
            sub.method[m] = "schmertmann" if ver == "1978" else "schmertmann_1970"
            izp = np.asarray(peak) if peak is not None else np.full(len(m), 0.6)
            cols_u, firsts = np.unique(cols, return_index=True)  # each column's first row
            for j, r in zip(cols_u, firsts):
                i = int(fi[r])
                params[int(j)] = {
                    "dp": float(dp[r]),
                    "c1": float(c1[r]),
                    "izp": float(izp[r]),
                    "sig_p": float(sig_p[r]),
                    "zp": float(zp[r] - fd[i]),
                    "factor": float(np.asarray(dgi.modulus_factor)[r]),
                }
                notes.setdefault(int(j), []).append(
                    f"Schmertmann {ver}: Δp = {dp[r]:.1f} kPa, C1 = {float(c1[r]):.3f}, "
                    f"Izp = {float(izp[r]):.3f} at {float(zp[r] - fd[i]):.2f} m below the base "
                    f"(σ'vp = {float(sig_p[r]):.1f} kPa), Iz = 0 at "
                    f"{float(np.asarray(dgi.zero_depth_ratio)[r]) * fw[i]:.2f} m below the base, "
                    f"E = {float(np.asarray(dgi.modulus_factor)[r]):.2f}·qc where qc is used; "
                    "creep C2 = 1 + 0.2 log10(t/0.1 yr)"
                )
    if is_bb.any():
        _burland_burbidge(
            sub, tab, gc, footings, q_full, fw, fd, lb, is_bb, notes, spt_mod, bb_reading
        )
    return OwnLoad(notes, spt_mod, params)


def own_below_reach(sub: Sublayers, tab: Tables, rows: np.ndarray | None = None) -> None:
    """Own granular part of footing-point sublayers deeper than the first pass (in place).

    Schmertmann's diagram ends at 2B–4B and Burland & Burbidge's z1 at most at 2B
    below the base, both inside the first pass: deeper, the footing's own method
    adds nothing (its elastic strain is *not* added on top of the method).
    ``rows`` (indices) limits it to those sublayers of ``sub`` (default: all).
    """
    rows = np.arange(len(sub)) if rows is None else np.asarray(rows, dtype=np.intp)
    owned = sub.owner[rows] >= 0
    if not owned.any() or not len(rows):
        return
    c, k = sub.col[rows], sub.stratum[rows]
    gran = (tab.behaviour == Behaviour.GRANULAR.value)[c, k]  # (the table, then rows)
    named = np.isin(
        tab.method,
        [
            GranularMethod.SCHMERTMANN.value,
            GranularMethod.SCHMERTMANN_1970.value,
            GranularMethod.BURLAND_BURBIDGE.value,
        ],
    )[c, k]
    by_method = owned & gran & named
    sub.gran_own[rows[by_method]] = 0.0
    sub.method[rows[by_method]] = tab.method[c[by_method], k[by_method]]


def bb_influence_depth(width: float, depth_below: np.ndarray, n: np.ndarray, bottoms: np.ndarray):
    """z1 of Burland & Burbidge (1985) at one footing point, and whether N decreases.

    ``depth_below`` (mid-depths below the base [m]), ``n`` (corrected N) of the granular
    sublayers, ``bottoms`` (bottom depth below the base of the stratum of each). z1 =
    B^0.763; where N decreases with depth — the mean N between B^0.763 and 2B is less
    than above B^0.763 — z1 = 2B or the base of the soft layer (the bottom of the stratum
    holding the lowest N within 2B), whichever is less (Burland & Burbidge 1985;
    METHODS.md §4 [V]).
    """
    usual = float(bb.influence_depth(width))
    above = depth_below < usual
    below = (depth_below >= usual) & (depth_below < 2.0 * width)
    if not above.any() or not below.any():
        return usual, False
    if np.mean(n[below]) >= np.mean(n[above]):
        return usual, False
    inside = depth_below < 2.0 * width
    soft = bottoms[inside][int(np.argmin(n[inside]))]
    return float(max(min(2.0 * width, soft), usual)), True


def _burland_burbidge(sub, tab, gc, footings, q_full, fw, fd, lb, is_bb, notes, spt_mod, reading):
    """Burland & Burbidge (1985) own settlement, per footing point, spread over z1.

    q' is the average gross effective bearing pressure (q_net + σ'v0 at the base: the
    paper's definition as we read it) and σ'p the larger of the stratum's
    preconsolidation and the effective overburden at the base (the maximum previous
    effective overburden of a footing in an excavation). ``reading = "net"`` takes
    instead q' = q_net with σ'p only where the stratum gives one (the reading of
    some texts, e.g. Tomlinson's "average net applied pressure").
    """
    nu = tab.nu[sub.col, sub.stratum]
    # the rows of each column in one sort (not a scan of every row per column)
    by_col = np.argsort(sub.col, kind="stable")
    sorted_col = sub.col[by_col]
    for j in np.unique(sub.col[is_bb]):
        m = by_col[np.searchsorted(sorted_col, j) : np.searchsorted(sorted_col, j, side="right")]
        i = int(sub.owner[m[0]])
        B = fw[i]
        k = sub.stratum[m]
        n = tab.spt[j, k]
        below_water = sub.mid[m] > gc.water[j]
        n_c = bb.corrected_n(
            n, gravel=tab.gravel[j, k], fine_or_silty_below_water=tab.fine[j, k] & below_water
        )
        zr = sub.top[m] - fd[i]
        bbm = is_bb[m]
        z1, decreasing = bb_influence_depth(
            B, (sub.mid[m] - fd[i])[bbm], n_c[bbm], (gc.bottoms[j, k] - fd[i])[bbm]
        )
        zone = (zr < z1) & bbm
        if not zone.any():
            continue
        w = np.minimum(sub.bottom[m] - fd[i], z1) - np.maximum(zr, 0.0)
        w = np.where(zone, np.clip(w, 0.0, None), 0.0)
        n_mean = float(np.sum(w * n_c) / np.sum(w))
        ic = float(bb.compressibility_index(n_mean))
        beh = tab.behaviour[j]
        non_gran = [
            kk
            for kk in range(len(beh))
            if beh[kk] != Behaviour.GRANULAR.value
            and gc.bottoms[j, kk] > fd[i]
            and gc.bottoms[j, kk] - gc.tops[j, kk] > 0
        ]
        hs = (float(gc.tops[j, non_gran[0]]) - fd[i]) if non_gran else np.inf
        fl = float(bb.thickness_factor(max(hs, 0.0), z1))
        fs = float(bb.shape_factor(lb[i]))
        sp_given = tab.sand_sp[j, k[0]]
        sig_base = float(gc.effective_stress(np.array([j]), np.array([fd[i]]))[0])
        if reading == "net":
            q_eff, sp = q_full[i], (None if np.isnan(sp_given) else float(sp_given))
        else:
            q_eff = q_full[i] + sig_base
            sp = max(0.0 if np.isnan(sp_given) else float(sp_given), sig_base)
            sp = sp if sp > 0 else None
        s_i = float(bb.immediate_settlement(q_eff, B, ic, sp))
        s = fs * fl * s_i
        sub.gran_own[m] = np.where(w > 0, s * w / np.sum(w), np.where(bbm, 0.0, sub.gran_own[m]))
        sub.method[m[bbm]] = "burland_burbidge"
        # equivalent modulus: the E with which elastic strain of the footing's own
        # stress over the depth where the modulus is applied (every SPT sublayer of
        # the column, not z1 alone) gives the method's settlement
        hs_own = (1 + nu[m]) * sub.own_t[m] - sub.own_sz[m]
        strain1 = elastic.vertical_strain(sub.own_sz[m], hs_own, 1.0, nu[m]) * sub.h[m]
        unit = float(np.sum(np.where(bbm, strain1, 0.0)))
        if s > 0 and unit > 0:
            e_eq = unit / s
            sub.modulus[m[bbm]] = e_eq
            for name in {tab.names[kk] for kk in k[bbm]}:
                spt_mod.setdefault(name, []).append(e_eq)
        sp_text = "none" if sp is None else f"{sp:.1f} kPa"
        notes.setdefault(int(j), []).append(
            f"Burland & Burbidge: q' = {q_eff:.1f} kPa ({reading} reading), σ'p = {sp_text}, "
            f"z1 = {z1:.2f} m{' (N decreases with depth)' if decreasing else ''}, "
            f"N̄ = {n_mean:.1f}, Ic = {ic:.4f}, fs = {fs:.3f}, fl = {fl:.3f}, "
            f"s_i = {s_i * 1000:.2f} mm; creep ft = 1 + R3 t/3 (t < 3 yr), "
            "1 + R3 + R log10(t/3) after"
        )


# --------------------------------------------------------------------------- time


@dataclass
class History:
    """Per-sublayer settlement over time (n, nt) [m], own and other loads, by part."""

    imm_own: np.ndarray
    imm_nb: np.ndarray
    creep_own: np.ndarray
    creep_nb: np.ndarray
    cons_own: np.ndarray
    cons_nb: np.ndarray
    sec_own: np.ndarray
    sec_nb: np.ndarray
    degree: np.ndarray  # (n, nt) U of the total load (clay), NaN elsewhere
    drainage_path: np.ndarray  # (n,) H_dr used for t_p [m], NaN off clay
    drainage_note: np.ndarray  # (n,) how the stratum drains (text)


def histories(
    sub: Sublayers,
    tab: Tables,
    gc: GroundColumns,
    times: np.ndarray,
    *,
    end_of_primary: str,
    r3: float,
    r: float,
    investigated_depth: float,
    own_mask: np.ndarray | None = None,
    total_mask: np.ndarray | None = None,
    clay_settlement: str = "oedometer",
    cohesive_immediate: bool = True,
    strip: np.ndarray | None = None,
    units: Units | None = None,
) -> History:
    """Settlement of every sublayer at every time (sublayers sorted by column, then depth).

    Granular: settlement on loading × the time factor of the stratum's method
    (C2 or ft; the part beyond 1 is *creep*). Cohesive: primary strain × thickness
    × the sublayer's degree of consolidation under the profile of the load
    (own load alone for the own part, all loads for the total), secondary
    compression Cα/(1 + e_p) log10(t/t_p) after the end of primary where the
    sublayer is loaded — Cα scaled by the ratio of the actual primary strain to the
    normally consolidated one: Cα·Cr/Cc where the clay stays in recompression, Cα
    once normally consolidated (Cα/Cc constant, Mesri & Godlewski 1977); for a clay with no
    bottom in the boreholes, down to the investigated depth only; undrained strain
    at once. ``own_mask`` and ``total_mask`` switch sublayers off (an explicit
    stress-ratio depth rule). ``units`` are the consolidating units of ``gc``
    (:func:`consolidating_units`), when the caller has them already.
    """
    n, nt = len(sub), len(times)
    om = np.ones(n, dtype=bool) if own_mask is None else own_mask
    tm = np.ones(n, dtype=bool) if total_mask is None else total_mask
    F = creep_factors(times, r3, r)[sub.creep]  # (n, nt)
    g_own = sub.gran_own * om
    g_tot = (sub.gran_own + sub.gran_nb) * tm
    imm_own = np.repeat(g_own[:, None], nt, axis=1)
    imm_tot = np.repeat(g_tot[:, None], nt, axis=1)
    creep_own = g_own[:, None] * (F - 1.0)
    creep_tot = g_tot[:, None] * (F - 1.0)
    cons_own = np.zeros((n, nt))
    cons_tot = np.zeros((n, nt))
    sec_own = np.zeros((n, nt))
    sec_tot = np.zeros((n, nt))
    degree = np.full((n, nt), np.nan)
    hdr_out = np.full(n, np.nan)
    note = np.full(n, "", dtype=object)
    c, k = sub.col, sub.stratum
    coh = (tab.behaviour == Behaviour.COHESIVE.value)[c, k] if n else np.zeros(0, dtype=bool)
    if coh.any():
        if units is None:
            units = consolidating_units(gc, tab, investigated_depth)
        idx = np.flatnonzero(coh)
        ukey = units.index[c[idx], k[idx]]
        order = np.argsort(ukey, kind="stable")
        idx, ukey = idx[order], ukey[order]
        starts = np.flatnonzero(np.r_[True, ukey[1:] != ukey[:-1]])
        lens = np.diff(np.r_[starts, len(idx)])
        width = int(lens.max())
        g = len(starts)
        pad = np.full((g, width), -1)
        group_of = np.repeat(np.arange(g), lens)  # the group of each sorted clay sublayer
        pad[group_of, np.arange(len(idx)) - np.repeat(starts, lens)] = idx
        valid = pad >= 0
        pi = np.where(valid, pad, idx[0])
        gu = ukey[starts]  # the unit of each group
        # depths below the unit's top in the equivalent layer of the first stratum's cv
        f = units.factor[c, k]
        zt_all = units.offset[c, k] + (sub.top - gc.tops[c, k]) * f
        zb_all = units.offset[c, k] + (sub.bottom - gc.tops[c, k]) * f
        zt = np.where(valid, zt_all[pi], 0.0)
        zb = np.where(valid, zb_all[pi], 0.0)
        thick, cv, drain = units.length[gu], units.cv[gu], units.drainage[gu]
        und_tot_all = sub.und_own + sub.und_nb
        for kind in ("tot", "own"):
            load = sub.sz_sust if kind == "tot" else sub.own_sust
            # the profile of the excess pore pressure (its size for unloading: swelling)
            u0 = np.where(valid, np.abs(load[pi]), 0.0)
            U = cons.sublayer_degree_of_consolidation(zt, zb, u0, thick, cv, times, drain)
            eps = sub.eps_tot if kind == "tot" else sub.eps_own
            und = und_tot_all if kind == "tot" else sub.und_own
            mask = tm if kind == "tot" else om
            oed = (eps * sub.h * mask)[pi]
            und_g = np.where(cohesive_immediate, und * mask, 0.0)[pi]
            if clay_settlement == ClaySettlement.SKEMPTON_BJERRUM.value:
                mu = _skempton_bjerrum_mu(sub, tab, pi, valid, strip, own=kind == "own")
                on_load = und_g
                later = mu[:, None] * oed
            else:  # the oedometer settlement, of which the undrained part happens at once
                on_load = np.clip(und_g, 0.0, np.maximum(oed, 0.0))
                later = oed - on_load
            vals = later[..., None] * U
            target = cons_tot if kind == "tot" else cons_own
            target[pad[valid]] = vals[valid]
            first = imm_tot if kind == "tot" else imm_own
            first[pad[valid]] += np.repeat(on_load[valid][:, None], nt, axis=1)
            if kind == "tot":
                degree[pad[valid]] = U[valid]
        hdr = units.drainage_path[gu]
        tp = cons.end_of_primary_time(
            end_of_primary, cv, hdr, given=tab.tp_given[c[pi[:, 0]], k[pi[:, 0]]]
        )
        e0 = tab.e0[c, k]
        ca = tab.ca[c, k]
        s0 = sub.sig0
        sp = np.where(
            np.isfinite(tab.sp[c, k]),
            tab.sp[c, k],
            np.where(np.isfinite(tab.ocr[c, k]), tab.ocr[c, k] * s0, s0),
        )
        sp = np.maximum(sp, s0)
        ccx = tab.cc[c, k]
        crx = np.where(np.isfinite(tab.cr[c, k]), tab.cr[c, k], ccx)
        tp_s = np.zeros(n)
        hdr_s = np.zeros(n)
        tp_s[pad[valid]] = np.broadcast_to(tp[:, None], pad.shape)[valid]
        hdr_s[pad[valid]] = np.broadcast_to(hdr[:, None], pad.shape)[valid]
        open_s = np.zeros(n, dtype=bool)
        open_s[pad[valid]] = np.broadcast_to(~np.isfinite(thick)[:, None], pad.shape)[valid]
        within = ~open_s | (sub.mid < investigated_depth)
        m = idx
        for load, eps, mask, target in (
            (sub.sz_sust, sub.eps_tot, tm, sec_tot),
            (sub.own_sust, sub.eps_own, om, sec_own),
        ):
            ep = cons.void_ratio_after(e0[m], eps[m])
            # Cα in the ratio of the clay's actual primary strain to the strain it
            # would have if normally consolidated: Cα·Cr/Cc in recompression, Cα
            # when normally consolidated, in between when the load crosses σ'p
            sf = s0[m] + np.maximum(load[m], 0.0)
            with np.errstate(divide="ignore", invalid="ignore"):
                nc = ccx[m] * np.log10(sf / s0[m]) / (1.0 + e0[m])
                share = np.where(nc > 0, eps[m] / nc, np.where(sp[m] > s0[m], crx[m] / ccx[m], 1.0))
            ca_used = ca[m] * np.clip(np.nan_to_num(share, nan=1.0), 0.0, 1.0)
            s = cons.secondary_strain(
                ca_used[:, None], ep[:, None], times[None, :], tp_s[m][:, None]
            )
            on = (load[m] > 0) & within[m] & mask[m]
            target[m] = np.where(on[:, None], s * sub.h[m][:, None], 0.0)
        hdr_out[m] = hdr_s[m]
        note[idx] = units.note[gu[group_of]]
    return History(
        imm_own=imm_own,
        imm_nb=imm_tot - imm_own,
        creep_own=creep_own,
        creep_nb=creep_tot - creep_own,
        cons_own=cons_own,
        cons_nb=cons_tot - cons_own,
        sec_own=sec_own,
        sec_nb=sec_tot - sec_own,
        degree=degree,
        drainage_path=hdr_out,
        drainage_note=note,
    )


@dataclass
class Units:
    """Consolidating units: cohesive strata in contact consolidate as one layer.

    Per (column, stratum): ``index`` (the unit, −1 off clay), ``factor`` √(cv_ref/cv)
    and ``offset`` (depth of the stratum's top below the unit's top in the
    equivalent layer [m]). Per unit: ``length`` (equivalent thickness [m], inf with
    no bottom), ``cv`` (cv_ref [m²/yr]), ``drainage`` ("both", "top", "bottom"),
    ``drainage_path`` (H_dr for the end of primary [m]) and ``note`` (why).
    """

    index: np.ndarray
    factor: np.ndarray
    offset: np.ndarray
    length: np.ndarray
    cv: np.ndarray
    drainage: np.ndarray
    drainage_path: np.ndarray
    note: np.ndarray


def consolidating_units(gc: GroundColumns, tab: Tables, investigated_depth: float) -> Units:
    """Group the cohesive strata of every column into consolidating layers, with their drainage.

    Rules (docs/methods.md §4.4):

    * cohesive strata in contact (no stratum of real thickness between them)
      consolidate as one layer; different cv are handled by the equivalent-thickness
      transformation z' = z √(cv_ref/cv) (cv_ref of the top stratum; common practice);
    * the top face drains unless the top stratum says ``drainage = "bottom"``;
    * the bottom face: ``"top"`` on the bottom stratum makes it impermeable and
      ``"both"``/``"bottom"`` drained; by default (``"auto"``) it drains into a
      granular stratum below and not into a rigid one;
    * a layer with no bottom in the boreholes drains at its top into a half-space.
    """
    n, k = gc.tops.shape
    index = np.full((n, k), -1)
    factor = np.ones((n, k))
    offset = np.zeros((n, k))
    length, cvs, drains, hdrs, notes = [], [], [], [], []
    beh = tab.behaviour
    names = tab.names
    for col in range(n):
        j = 0
        while j < k:
            if beh[col, j] != Behaviour.COHESIVE.value or not (
                gc.bottoms[col, j] > gc.tops[col, j]
            ):
                j += 1
                continue
            run = [j]
            nxt = j + 1
            while nxt < k:
                thick = gc.bottoms[col, nxt] - gc.tops[col, nxt]
                if thick <= 0:
                    nxt += 1
                    continue
                if beh[col, nxt] == Behaviour.COHESIVE.value:
                    run.append(nxt)
                    nxt += 1
                    continue
                break
            below = beh[col, nxt] if nxt < k else ""
            u = len(length)
            cv_ref = tab.cv[col, run[0]]
            z = 0.0
            for r in run:
                f = float(np.sqrt(cv_ref / tab.cv[col, r])) if tab.cv[col, r] > 0 else 1.0
                index[col, r] = u
                factor[col, r] = f
                offset[col, r] = z
                z += (gc.bottoms[col, r] - gc.tops[col, r]) * f
            top_says = tab.drainage[col, run[0]]
            bot_says = tab.drainage[col, run[-1]]
            top_open = top_says != Drainage.BOTTOM.value
            what = " + ".join(dict.fromkeys(names[r] for r in run))
            if not np.isfinite(z):
                drain, hdr = "top", max(investigated_depth - gc.tops[col, run[0]], 0.0)
                why = (
                    f"{what}: no bottom in the boreholes, drained at its top into a half-space; "
                    f"t_p from H_dr = {hdr:.2f} m to the investigated depth"
                )
            else:
                if bot_says == Drainage.TOP.value:
                    bot_open, reason = False, "impermeable below (as the stratum says)"
                elif bot_says in (Drainage.BOTH.value, Drainage.BOTTOM.value):
                    bot_open, reason = True, "drained below (as the stratum says)"
                elif below == Behaviour.GRANULAR.value:
                    bot_open, reason = True, "drained into the granular stratum below"
                else:
                    bot_open, reason = False, "impermeable on the rigid stratum below"
                if not top_open and not bot_open:
                    top_open, reason = True, reason + "; no drained face stated: top drained"
                drain = "both" if (top_open and bot_open) else ("top" if top_open else "bottom")
                hdr = z / 2.0 if drain == "both" else z
                joined = " (strata in contact: one layer)" if len(run) > 1 else ""
                face = "drained at the top" if top_open else "impermeable at the top"
                why = f"{what}{joined}: {face}, {reason}; H_dr = {hdr:.2f} m" + (
                    " (equivalent thickness, cv of the top stratum)" if len(run) > 1 else ""
                )
            length.append(z)
            cvs.append(cv_ref)
            drains.append(drain)
            hdrs.append(hdr)
            notes.append(why)
            j = nxt
    return Units(
        index=index,
        factor=factor,
        offset=offset,
        length=np.array(length, dtype=float),
        cv=np.array(cvs, dtype=float),
        drainage=np.array(drains, dtype=object),
        drainage_path=np.array(hdrs, dtype=float),
        note=np.array(notes, dtype=object),
    )


def _skempton_bjerrum_mu(sub, tab, pi, valid, strip, *, own: bool) -> np.ndarray:
    """μ = A + α(1 − A) per consolidating unit (Skempton & Bjerrum 1957).

    α = ∫Δσ3 dz / ∫Δσ1 dz over the unit's sublayers from the elastic stresses
    (ν = 0.5): Δσ3 = ((1 + ν)T − Δσz)/2 on the axis of a compact load, T − Δσz in
    plane strain under a strip (σy = ν(σx + σz)); A is the stratum's
    ``pore_pressure_coefficient`` (thickness-weighted over the unit). α is kept within
    [0, 1], its physical range for downward loads (Δσ3 ≤ Δσ1).
    """
    sz = (sub.own_sz if own else sub.sz)[pi]
    t = (sub.own_t if own else sub.t)[pi]
    plane = np.zeros(pi.shape, dtype=bool) if strip is None else strip[pi]
    s3 = np.where(plane, t - sz, ((1 + UNDRAINED_POISSON) * t - sz) / 2.0)
    h = np.where(valid, sub.h[pi], 0.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        alpha = np.sum(np.where(valid, s3, 0.0) * h, axis=1) / np.sum(
            np.where(valid, sz, 0.0) * h, axis=1
        )
        a = tab.pore_a[sub.col[pi], sub.stratum[pi]]
        a = np.sum(np.where(valid, a, 0.0) * h, axis=1) / np.sum(h, axis=1)
    alpha = np.clip(np.nan_to_num(alpha, nan=1.0), 0.0, 1.0)
    return np.nan_to_num(a + alpha * (1.0 - a), nan=1.0)


def final_estimate(sub: Sublayers, creep_life: np.ndarray) -> np.ndarray:
    """Per-sublayer final settlement estimate [m] for the depth rule (no time, no secondary)."""
    eps = sub.eps_tot * sub.h
    return (sub.gran_own + sub.gran_nb) * creep_life[sub.creep] + sub.und_own + sub.und_nb + eps


__all__ = [
    "FIELD_CONE_FACTOR",
    "History",
    "Sublayers",
    "Tables",
    "creep_factors",
    "field_modulus",
    "final_estimate",
    "histories",
    "own_load_settlement",
    "sublayer_strains",
]
