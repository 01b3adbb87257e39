"""tauwise from Python: oscillator and clock stability on numpy arrays.

σ_y(τ) with confidence intervals and the noise type at each τ, the
power-law noise model, phase-noise spectra, integrated jitter, MTIE/TDEV
wander against masks, holdover time error and the fleet comparison — the
same library as the ``tauwise`` command, called in-process. Every result
is the command's own document: ``result.to_dict()`` equals
``tauwise COMMAND --format json`` for the same question (``docs/json.md``).

Conventions (the library's): SI units inside (seconds, hertz, fractional
frequency); NaN marks a gap; a number that decides a verdict needs its unit
(``budget="1.5us"``, ``span="24h"``; a bare number is refused). Option
values are given as the command line writes them (``taus="decade"``,
``dev="oadev,mdev"`` or a list, ``carrier="10MHz"``) and parsed by the same
parsers, so a refused value gets the same message. Errors raise
``ValueError`` (bad options or data), ``OSError`` (a file that cannot be
opened or written) or :class:`FileContentError` (a file read but refused,
naming file and line; both an ``OSError`` and a ``ValueError``). The long
computations release the GIL, so threads run them in parallel.

``plot="chart.svg"`` (or ``.png``) on ``stability``, ``jitter``, ``wander``,
``holdover``, ``separate`` and ``timeline`` draws the chart the command's
``--plot`` draws, with the same library functions (the same file, byte for
byte), written atomically.

Where a result feeds a decision (masks, limits, holdover budgets) it is an
engineering estimate: the governing standard, the equipment maker's data
and local acceptance procedures decide (:data:`DECISION_CAUTION`).
"""

from __future__ import annotations

import json
import os
import warnings
from typing import Any, Dict, Iterable, List, Mapping, Optional, Sequence, Union

import numpy as np

from . import _tauwise
from ._errors import FileContentError

__all__ = [
    "Curve",
    "DECISION_CAUTION",
    "DEFAULT_CONFIDENCE",
    "DevicePart",
    "FileContentError",
    "Record",
    "Result",
    "StabilityResult",
    "TauwiseWarning",
    "DEFAULT_CONFORMANCE",
    "EVENT_CONFIDENCE",
    "convert",
    "device",
    "fleet",
    "holdover",
    "inspect",
    "jitter",
    "noise",
    "prepare",
    "read",
    "report",
    "separate",
    "simulate",
    "spectrum",
    "stability",
    "timeline",
    "wander",
]

__version__: str = _tauwise.__version__
#: The caution beside every output that feeds a decision.
DECISION_CAUTION: str = _tauwise.DECISION_CAUTION
#: The library's default two-sided confidence level of the intervals.
DEFAULT_CONFIDENCE: float = _tauwise.DEFAULT_CONFIDENCE
#: The conformance level of the guarded decision rule when none is given.
DEFAULT_CONFORMANCE: float = _tauwise.DEFAULT_CONFORMANCE
#: The two-sided confidence of the timeline's event test by default.
EVENT_CONFIDENCE: float = _tauwise.EVENT_CONFIDENCE

DevicePart = _tauwise.DevicePart

PathLike = Union[str, "os.PathLike[str]"]


class TauwiseWarning(UserWarning):
    """Something in the input looks wrong (the reader's and Welch's warnings)."""


def _text(value: Any) -> Optional[str]:
    """An option value as the command line would write it (``None`` stays)."""
    if value is None:
        return None
    if isinstance(value, bool):
        raise ValueError(f"expected a value such as a number or a text, got {value!r}")
    if isinstance(value, os.PathLike):
        return os.fspath(value)
    if isinstance(value, float):
        return repr(value)
    return str(value)


def _list_text(value: Any) -> str:
    """A list option (``dev``) as its comma-separated text."""
    if isinstance(value, str):
        return value
    return ",".join(str(v) for v in value)


def _strings(value: Any) -> List[str]:
    """A repeatable option (bands, masks, files): one value or several."""
    if value is None:
        return []
    if isinstance(value, (str, os.PathLike)):
        return [os.fspath(value)]
    return [os.fspath(v) if isinstance(v, os.PathLike) else str(v) for v in value]


def _path(value: Optional[PathLike]) -> Optional[str]:
    return None if value is None else os.fspath(value)


def _number(value: Any) -> float:
    """A JSON number, or a non-finite value the documents write as text."""
    if value is None:
        return float("nan")
    return float(value)  # "inf", "-inf" and "NaN" are what float() reads


def _columns(rows: Sequence[Mapping[str, Any]]) -> Dict[str, np.ndarray]:
    """A list of JSON objects as one numpy array per key: numbers as float64
    (null → NaN; "inf"/"NaN" as floats), whole numbers as int64 when no row
    lacks them, anything else (text, objects) as an object array."""
    keys: List[str] = []
    for r in rows:
        for k in r:
            if k not in keys:
                keys.append(k)
    out: Dict[str, np.ndarray] = {}
    for k in keys:
        vals = [r.get(k) for r in rows]
        present = [v for v in vals if v is not None]
        if present and all(isinstance(v, bool) for v in present):
            out[k] = np.array(vals, dtype=object)
        elif present and all(isinstance(v, int) and not isinstance(v, bool) for v in present):
            if len(present) == len(vals):
                out[k] = np.array(vals, dtype=np.int64)
            else:
                out[k] = np.array([_number(v) for v in vals], dtype=np.float64)
        elif present and all(
            isinstance(v, (int, float)) and not isinstance(v, bool)
            or v in ("inf", "-inf", "NaN")
            for v in present
        ):
            out[k] = np.array([_number(v) for v in vals], dtype=np.float64)
        else:
            out[k] = np.array(vals, dtype=object)
    return out


# ---------------------------------------------------------------------------
# Records


class Record:
    """A phase or frequency record: the values in SI units (phase in
    seconds, fractional frequency), NaN for a gap, τ0, and where it came
    from (the file as read, or an array).

    ``x`` is the record as phase (s), ``y`` as fractional frequency; each is
    made once, on first use (integrated or differenced when the record holds
    the other quantity).
    """

    __slots__ = ("_inner", "_x", "_y")

    def __init__(self, inner: "_tauwise.Record") -> None:
        self._inner = inner
        self._x: Optional[np.ndarray] = None
        self._y: Optional[np.ndarray] = None

    @classmethod
    def from_array(
        cls,
        values: Any,
        tau0: Union[float, str],
        kind: str = "phase",
    ) -> "Record":
        """A record from readings in SI units: phase in seconds
        (``kind="phase"``) or fractional frequency (``kind="freq"``), one
        every ``tau0`` (seconds, or a duration such as ``"100ms"``); NaN
        marks a gap. Any 1-D array layout is taken; float64, float32, int64
        and int32 are converted to the record's float64 values in one pass
        (other types go through ``numpy.asarray(values, float64)`` first)."""
        if tau0 is None:
            raise ValueError("tau0: an array needs its sampling interval (e.g. tau0=1.0 or \"100ms\")")
        arr = values if isinstance(values, np.ndarray) else np.asarray(values)
        if arr.ndim != 1:
            raise ValueError(f"expected a 1-D array of readings, got an array of shape {arr.shape}")
        if arr.dtype not in (np.float64, np.float32, np.int64, np.int32) or not arr.dtype.isnative:
            arr = np.asarray(arr, dtype=np.float64)
        return cls(_tauwise.Record.from_array(arr, _text(tau0), kind))

    @property
    def x(self) -> np.ndarray:
        """The record as phase x, s (NaN = gap)."""
        if self._x is None:
            self._x = self._inner.phase()
            self._x.flags.writeable = False
        return self._x

    @property
    def y(self) -> np.ndarray:
        """The record as fractional frequency y (NaN = gap)."""
        if self._y is None:
            self._y = self._inner.frequency()
            self._y.flags.writeable = False
        return self._y

    @property
    def values(self) -> np.ndarray:
        """The readings as held: ``x`` for a phase record, ``y`` for frequency."""
        return self.x if self.kind == "phase" else self.y

    @property
    def kind(self) -> str:
        """``"phase"`` or ``"freq"``."""
        return self._inner.kind

    @property
    def tau0(self) -> float:
        """Sampling interval τ0, s."""
        return self._inner.tau0

    @property
    def gaps(self) -> int:
        """Missing samples (NaN)."""
        return self._inner.gaps

    @property
    def path(self) -> str:
        """The file as given to :func:`read`, or ``"<array>"``."""
        return self._inner.path

    @property
    def preamble(self) -> List[str]:
        """The lines of the file before the first reading."""
        return self._inner.preamble

    @property
    def info(self) -> Optional[Dict[str, Any]]:
        """How the file was read (header, unit and where it came from,
        delimiter, decimal mark, time column, notes); ``None`` for an array."""
        text = self._inner.info_json
        return None if text is None else json.loads(text)

    @property
    def notes(self) -> List[str]:
        """Plain statements about how the file was read."""
        return self._inner.notes

    @property
    def warnings(self) -> List[str]:
        """Things in the file that look wrong."""
        return self._inner.warnings

    def __len__(self) -> int:
        return len(self._inner)

    def __repr__(self) -> str:
        return (
            f"<tauwise.Record {self.kind} {len(self)} points, tau0={self.tau0:g} s, "
            f"{self.gaps} gaps, from {self.path}>"
        )


def read(
    path: PathLike,
    *,
    data: Optional[str] = None,
    tau0: Union[float, str, None] = None,
    units: Optional[str] = None,
    carrier: Union[float, str, None] = None,
    value_column: Optional[int] = None,
    time_column: Union[int, str, None] = None,
    snap: Union[float, str, None] = None,
    wrap: Union[float, str, None] = None,
    comment: Optional[str] = None,
    decimal_comma: bool = False,
    binary: Optional[str] = None,
) -> Record:
    """Read a time record with the reader every command uses (text with
    preambles, comments, units in headers, quoted CSV, decimal commas;
    ``.npy``; raw binary with ``binary="f64le"``): the options are the
    command line's (``docs/input-files.md``). The reader's warnings are
    issued as :class:`TauwiseWarning`; a file it cannot read right is
    refused with the file and line (:class:`FileContentError`)."""
    inner = _read_quietly(
        path,
        data=data,
        tau0=tau0,
        units=units,
        carrier=carrier,
        value_column=value_column,
        time_column=time_column,
        snap=snap,
        wrap=wrap,
        comment=comment,
        decimal_comma=decimal_comma,
        binary=binary,
    )
    for w in inner.warnings:
        warnings.warn(f"{inner.path}: {w}", TauwiseWarning, stacklevel=2)
    return Record(inner)


def _read_quietly(
    path: PathLike,
    *,
    data: Optional[str] = None,
    tau0: Union[float, str, None] = None,
    units: Optional[str] = None,
    carrier: Union[float, str, None] = None,
    value_column: Optional[int] = None,
    time_column: Union[int, str, None] = None,
    snap: Union[float, str, None] = None,
    wrap: Union[float, str, None] = None,
    comment: Optional[str] = None,
    decimal_comma: bool = False,
    binary: Optional[str] = None,
) -> "_tauwise.Record":
    """:func:`read` with the warnings left in the record (``inspect`` shows
    them in its document)."""
    return _tauwise.read(
        os.fspath(path),
        data=data,
        tau0=_text(tau0),
        units=units,
        carrier=_text(carrier),
        value_column=_text(value_column),
        time_column=_text(time_column),
        snap=_text(snap),
        wrap=_text(wrap),
        comment=comment,
        decimal_comma=decimal_comma,
        binary=binary,
    )


_READ_KEYS = (
    "units",
    "carrier",
    "value_column",
    "time_column",
    "snap",
    "wrap",
    "comment",
    "decimal_comma",
    "binary",
)


def _record(
    data: Any,
    tau0: Union[float, str, None],
    kind: Optional[str],
    read_options: Mapping[str, Any],
    quiet: bool = False,
) -> "_tauwise.Record":
    """The record a function works on: a :class:`Record`, a file read with
    ``read_options`` (and ``tau0``/``kind`` when given), or an array.
    ``quiet`` leaves a file's warnings in the record instead of issuing
    them."""
    unknown = set(read_options) - set(_READ_KEYS)
    if unknown:
        raise TypeError(f"unexpected keyword argument(s): {', '.join(sorted(unknown))}")
    if isinstance(data, Record):
        if tau0 is not None or kind is not None or read_options:
            raise ValueError(
                "tau0, kind and reading options go with a file or an array; a Record already has them"
            )
        return data._inner
    if isinstance(data, (str, os.PathLike)):
        opts = dict(read_options)
        if quiet:
            return _read_quietly(data, data=kind, tau0=tau0, **opts)
        return read(data, data=kind, tau0=tau0, **opts)._inner
    if read_options:
        raise ValueError(
            f"{', '.join(sorted(read_options))}: reading options go with a file; "
            "an array holds SI values (phase in s, fractional frequency)"
        )
    return Record.from_array(data, tau0, kind or "phase")._inner


# ---------------------------------------------------------------------------
# Results


class Result:
    """A command's result: its JSON document (``to_dict()`` equals
    ``tauwise COMMAND --format json``), with the members as items
    (``result["points"]``) and, for the commands that judge, the gate."""

    __slots__ = ("command", "_text", "_dict", "gate")

    def __init__(self, command: str, text: str, gate: Optional[str] = None) -> None:
        #: The command whose document this is.
        self.command = command
        self._text = text
        self._dict: Optional[Dict[str, Any]] = None
        #: What ``--fail-on-violation`` makes of the verdicts: ``"pass"``,
        #: ``"exceeds"``, ``"not-judged"`` or ``"undecided"``
        #: (``None`` where nothing is judged).
        self.gate = gate

    def to_dict(self) -> Dict[str, Any]:
        """The document as Python objects (a new copy each call). Values that
        are not finite are the strings ``"inf"``, ``"-inf"``, ``"NaN"`` and
        are listed under ``"not_finite"``, as in the JSON contract."""
        return json.loads(self._text)

    def to_json(self) -> str:
        """The document as the command writes it."""
        return self._text

    def _doc(self) -> Dict[str, Any]:
        if self._dict is None:
            self._dict = json.loads(self._text)
        return self._dict

    def __getitem__(self, key: str) -> Any:
        return self._doc()[key]

    def __contains__(self, key: object) -> bool:
        return key in self._doc()

    def keys(self) -> Iterable[str]:
        """The document's members."""
        return self._doc().keys()

    def columns(self, member: str) -> Dict[str, np.ndarray]:
        """A member that is a list of rows (``"points"``, ``"mtie"``,
        ``"tdev"``, ``"bands"``) as one numpy array per key."""
        return _columns(self._doc()[member])

    def __repr__(self) -> str:
        gate = f", gate={self.gate}" if self.gate is not None else ""
        return f"<tauwise.Result {self.command}: {', '.join(self.keys())}{gate}>"


class Curve:
    """One σ(τ) curve as numpy arrays: ``tau`` (s), ``m`` (averaging
    factor), ``dev``, ``lo``/``hi`` (the confidence interval; NaN where
    there is none), ``edf``, ``noise`` (``"WFM"``, … or ``"drift"``; ``None``
    where not identified), ``alpha``, ``terms`` (terms averaged; -1 where
    not counted) and ``bias`` (the factor divided out, NaN where none)."""

    __slots__ = (
        "name",
        "estimator",
        "origin",
        "tau",
        "m",
        "dev",
        "lo",
        "hi",
        "edf",
        "noise",
        "alpha",
        "terms",
        "bias",
        "source",
    )

    def __init__(self, doc: Mapping[str, Any]) -> None:
        pts = doc["points"]
        num = lambda k: np.array([_number(p.get(k)) for p in pts], dtype=np.float64)  # noqa: E731
        #: The curve's name (``oadev``, ``oadev-from-lf``, ``best``).
        self.name: str = doc["name"]
        #: The estimator.
        self.estimator: str = doc["estimator"]
        #: ``measured``, ``from-lf``, ``from-model``, ``best``.
        self.origin: str = doc["origin"]
        self.tau = num("tau")
        self.m = np.array([p.get("m", -1) for p in pts], dtype=np.int64)
        self.dev = num("dev")
        self.lo = num("lo")
        self.hi = num("hi")
        self.edf = num("edf")
        self.noise = np.array([p.get("noise") for p in pts], dtype=object)
        self.alpha = np.array(
            [p["alpha"] if p.get("alpha") is not None else np.nan for p in pts], dtype=np.float64
        )
        self.terms = np.array(
            [p["terms"] if p.get("terms") is not None else -1 for p in pts], dtype=np.int64
        )
        self.bias = num("bias")
        #: For the ``best`` curve: the estimator each point came from.
        self.source = (
            np.array([p.get("from") for p in pts], dtype=object)
            if any("from" in p for p in pts)
            else None
        )

    def __len__(self) -> int:
        return len(self.tau)

    def __repr__(self) -> str:
        return f"<tauwise.Curve {self.name}: {len(self)} τ>"


class StabilityResult(Result):
    """The result of :func:`stability`: ``curves`` by name (each a
    :class:`Curve` of numpy arrays), the ``confidence`` level, and the
    document (``to_dict()``)."""

    __slots__ = ("curves",)

    def __init__(self, text: str, gate: Optional[str]) -> None:
        super().__init__("stability", text, gate)
        #: The curves by name, in the document's order.
        self.curves: Dict[str, Curve] = {c["name"]: Curve(c) for c in self._doc()["curves"]}

    @property
    def confidence(self) -> float:
        """The two-sided confidence level of the intervals."""
        return float(self._doc()["confidence"])

    def __getattr__(self, name: str) -> Curve:
        curves = object.__getattribute__(self, "curves")
        if name in curves:
            return curves[name]
        raise AttributeError(name)


# ---------------------------------------------------------------------------
# Commands


def stability(
    data: Any,
    tau0: Union[float, str, None] = None,
    kind: Optional[str] = None,
    dev: Union[str, Sequence[str]] = ("oadev",),
    taus: Union[str, Sequence[Union[float, str]]] = "octave",
    confidence: float = DEFAULT_CONFIDENCE,
    *,
    remove_drift: Optional[str] = None,
    noise_type: Union[str, int, None] = None,
    uncorrected: bool = False,
    best: bool = False,
    limit_files: Union[PathLike, Sequence[PathLike], None] = None,
    lf: Optional[PathLike] = None,
    carrier: Union[float, str, None] = None,
    bandwidth: Union[float, str, None] = None,
    lf_uncertainty: Union[float, str, None] = None,
    decision_rule: Optional[str] = None,
    conformance: Union[float, str, None] = None,
    plot: Optional[PathLike] = None,
    **read_options: Any,
) -> StabilityResult:
    """σ(τ) curves with confidence intervals and the noise type at each τ
    (``tauwise stability``).

    ``data`` is a :class:`Record`, a file (read with ``read_options`` as
    :func:`read` takes them) or a 1-D array of SI readings (phase in s, or
    fractional frequency with ``kind="freq"``) with ``tau0``. ``dev`` names
    estimators (``adev oadev mdev tdev hdev ohdev totdev mtot ttot htot
    theo1 theoh mtie tie-rms``), ``taus`` the grid (``octave``, ``decade``,
    ``all``, ``log:N`` or a list of durations), ``confidence`` the two-sided
    level. ``remove_drift`` (``linear``/``quadratic``) takes out a
    least-squares drift first; ``best`` adds the curve of the most degrees
    of freedom; ``limit_files`` checks σ limits (``docs/limit-file.md``);
    ``lf`` with ``carrier`` sets a phase-noise table's σ(τ) beside the
    record. A statistic at τ does not depend on which other τ were asked for.

    ``decision_rule`` (``"simple"``, the default, or ``"guarded"``) and
    ``conformance`` (in (0.5, 1), default 0.95) say how a verdict is
    reached from the estimate and its uncertainty (``--decision-rule``,
    ``--conformance``; ``docs/decision-rules.md``): under ``guarded`` a
    verdict is ``undecided`` unless the probability of conformance (or of
    non-conformance) reaches the level.
    """
    taus_text = taus if isinstance(taus, str) else ",".join(_text(t) or "" for t in taus)
    rec = _record(data, tau0, kind, read_options)
    text, gate = _tauwise.stability(
        rec,
        _list_text(dev),
        taus_text,
        _text(confidence),
        noise_type=_text(noise_type),
        uncorrected=uncorrected,
        best=best,
        remove_drift=remove_drift,
        limit_files=_strings(limit_files),
        lf=_path(lf),
        carrier=_text(carrier),
        bandwidth=_text(bandwidth),
        lf_uncertainty=_text(lf_uncertainty),
        decision_rule=decision_rule,
        conformance=_text(conformance),
        plot=_path(plot),
    )
    return StabilityResult(text, gate)


def noise(
    data: Any,
    tau0: Union[float, str, None] = None,
    kind: Optional[str] = None,
    taus: str = "octave",
    *,
    remove_drift: Optional[str] = None,
    **read_options: Any,
) -> Result:
    """The dominant noise at each τ (WPM … RWFM, or drift) and the power-law
    model h_α fitted to OADEV and MDEV with standard errors (``tauwise
    noise``). ``result.columns("points")`` gives the per-τ rows as arrays."""
    rec = _record(data, tau0, kind, read_options)
    return Result("noise", _tauwise.noise(rec, taus, remove_drift=remove_drift))


def spectrum(
    data: Any,
    tau0: Union[float, str, None] = None,
    kind: Optional[str] = None,
    *,
    carrier: Union[float, str, None] = None,
    quantity: str = "lf",
    window: str = "hann",
    segment: Optional[int] = None,
    overlap: float = 0.5,
    per_decade: int = 10,
    all_bins: bool = False,
    **read_options: Any,
) -> Result:
    """The PSD of a record by Welch's method as L(f), S_φ, S_y, S_x
    (``tauwise spectrum``); L(f) and S_φ need ``carrier``."""
    rec = _record(data, tau0, kind, read_options)
    text, warns = _tauwise.spectrum(
        rec,
        quantity,
        window,
        _text(overlap),
        _text(per_decade),
        all_bins=all_bins,
        segment=_text(segment),
        carrier=_text(carrier),
    )
    for w in warns:
        warnings.warn(w, TauwiseWarning, stacklevel=2)
    return Result("spectrum", text)


def convert(
    *,
    to: str,
    lf: Optional[PathLike] = None,
    model: Optional[str] = None,
    sigma: Optional[PathLike] = None,
    quantity: Optional[str] = None,
    carrier: Union[float, str, None] = None,
    dev: Union[str, Sequence[str]] = ("adev", "mdev"),
    taus: str = "octave",
    max_tau: Union[float, str, None] = None,
    tau0: Union[float, str, None] = None,
    fh: Union[float, str, None] = None,
    from_offset: Union[float, str] = "1",
    to_offset: Union[float, str, None] = None,
    per_decade: int = 10,
) -> Result:
    """Between phase-noise tables, power-law models and σ(τ) (``tauwise
    convert``): ``to="sigma"`` (curves), ``"lf"`` (a table) or ``"model"``
    (h_α fitted to a table), from exactly one of ``lf`` (a table file),
    ``model`` (``"h0=1e-22,h-1=3e-26"``) or ``sigma`` (a stability JSON
    document)."""
    return Result(
        "convert",
        _tauwise.convert(
            to,
            lf=_path(lf),
            model=model,
            sigma=_path(sigma),
            quantity=quantity,
            carrier=_text(carrier),
            dev=_list_text(dev),
            taus=taus,
            max_tau=_text(max_tau),
            tau0=_text(tau0),
            fh=_text(fh),
            from_offset=_text(from_offset),
            to_offset=_text(to_offset),
            per_decade=_text(per_decade),
        ),
    )


def jitter(
    table: Optional[PathLike] = None,
    carrier: Union[float, str, None] = None,
    bands: Union[str, Sequence[str]] = (),
    *,
    record: Any = None,
    tau0: Union[float, str, None] = None,
    kind: Optional[str] = None,
    limits: Union[str, Sequence[str], None] = None,
    limit_files: Union[PathLike, Sequence[PathLike], None] = None,
    quantity: Optional[str] = None,
    value_column: Optional[int] = None,
    filters: Union[str, Sequence[str], None] = None,
    filter_files: Union[PathLike, Sequence[PathLike], None] = None,
    filter_set: Optional[PathLike] = None,
    period: bool = False,
    periods: Optional[int] = None,
    spurs: Optional[PathLike] = None,
    ui_rate: Union[float, str, None] = None,
    spur_search: bool = True,
    spur_threshold: Union[float, str, None] = None,
    extrapolate: bool = False,
    window: str = "hann",
    segment: Optional[int] = None,
    decision_rule: Optional[str] = None,
    conformance: Union[float, str, None] = None,
    plot: Optional[PathLike] = None,
    **read_options: Any,
) -> Result:
    """Integrated phase jitter over offset bands (``"12k:5M"``) of an L(f)
    ``table`` — ``tauwise jitter TABLE`` — or, with ``record=`` (a
    :class:`Record`, a file read with ``read_options``, or an array with
    ``tau0``), of the record's Welch spectrum (``window``, ``segment``) —
    ``tauwise jitter --record FILE``. Optionally weighted (``filters``:
    Butterworth, loops), judged against ``limits`` with their unit
    (``"1ps"``, ``"10mrad"``, ``"0.01UI"``). ``period`` (or ``periods=N``)
    adds each band's rms period, cycle-to-cycle and N-period jitter from the
    spectrum, and for a record also the same measured from its edges (a
    record of every edge: τ0 = 1/carrier). The spectrum's warnings are
    issued as :class:`TauwiseWarning`.

    L(f) and jitter limits have no uncertainty here, so they are decided
    at the estimate under either ``decision_rule`` (and say so); see
    :func:`stability` for the rules."""
    if carrier is None:
        raise ValueError("carrier: jitter needs the carrier frequency (e.g. carrier=\"10MHz\")")
    rec = None
    if record is not None:
        if value_column is not None:
            read_options = dict(read_options, value_column=value_column)
            value_column = None
        rec = _record(record, tau0, kind, read_options)
    elif tau0 is not None or kind is not None or read_options:
        raise ValueError(
            "tau0, kind and reading options go with record=; a phase-noise table is read with "
            "quantity and value_column"
        )
    text, gate, warns = _tauwise.jitter(
        _path(table),
        rec,
        _text(carrier),
        _strings(bands),
        quantity=quantity,
        value_column=_text(value_column),
        filters=_strings(filters),
        filter_files=_strings(filter_files),
        filter_set=_path(filter_set),
        period=period,
        periods=_text(periods),
        spurs=_path(spurs),
        ui_rate=_text(ui_rate),
        spur_search=spur_search,
        spur_threshold=_text(spur_threshold),
        extrapolate=extrapolate,
        limits=_strings(limits),
        limit_files=_strings(limit_files),
        window=window,
        segment=_text(segment),
        decision_rule=decision_rule,
        conformance=_text(conformance),
        plot=_path(plot),
    )
    for w in warns:
        warnings.warn(w, TauwiseWarning, stacklevel=2)
    return Result("jitter", text, gate)


def inspect(
    data: Any,
    tau0: Union[float, str, None] = None,
    kind: Optional[str] = None,
    *,
    outliers: Union[float, str] = 5.0,
    **read_options: Any,
) -> Result:
    """How a file was read and what its record holds before any analysis —
    ``tauwise inspect``: preamble, header, delimiter, decimal mark, unit and
    where it came from, notes, warnings, options that would read it better;
    size, span, τ0, gaps, mean frequency offset, linear drift, and the
    frequency values further than ``outliers`` scaled MADs from the median.
    ``data`` is a file (read with ``read_options``) or a :class:`Record`
    from :func:`read`; an array has no file to describe and is refused.
    The reader's warnings are in the document (not issued)."""
    rec = _record(data, tau0, kind, read_options, quiet=True)
    return Result("inspect", _tauwise.inspect(rec, _text(outliers)))


def prepare(
    data: Any,
    out: Optional[PathLike] = None,
    *,
    tau0: Union[float, str, None] = None,
    kind: Optional[str] = None,
    remove_drift: Optional[str] = None,
    outliers: Union[float, str, None] = None,
    fill_gaps: bool = False,
    decimate: Optional[int] = None,
    **read_options: Any,
) -> Record:
    """A cleaned copy of a record — ``tauwise prepare``: frequency values
    further than ``outliers`` scaled MADs from the median made gaps (a phase
    step taken out of the later phase), a least-squares drift removed
    (``remove_drift="linear"``/``"quadratic"``), interior gaps filled by
    linear interpolation (``fill_gaps``), every N-th phase sample kept (or N
    frequency values averaged, ``decimate=N``), in that order. Returns the
    cleaned record; its ``notes`` say what each step did. With ``out`` the
    record is also written, atomically, as the command writes it (the same
    bytes: comment lines with the notes, a header, time stamps and values),
    and the returned record names that file."""
    rec = _record(data, tau0, kind, read_options)
    return Record(
        _tauwise.prepare(
            rec,
            out=_path(out),
            remove_drift=remove_drift,
            outliers=_text(outliers),
            fill_gaps=fill_gaps,
            decimate=_text(decimate),
        )
    )


def separate(
    pairs: Any,
    *,
    dev: str = "oadev",
    method: str = "independent",
    sessions: str = "simultaneous",
    seed: int = 1,
    taus: Union[str, Sequence[Union[float, str]]] = "octave",
    confidence: float = DEFAULT_CONFIDENCE,
    remove_drift: Optional[str] = None,
    tau0: Union[float, str, None] = None,
    kind: Optional[str] = None,
    plot: Optional[PathLike] = None,
    **read_options: Any,
) -> Result:
    """The stability of each clock from records of pairs measured against
    each other — ``tauwise separate``: the three-cornered hat (Gray & Allan
    1974) for three clocks, least squares (Barnes) for more pairs or clocks
    (``method="independent"``), or the covariance form for correlated
    clocks (Premoli & Tavella 1993, ``method="covariance"``, seeded Monte
    Carlo intervals).

    ``pairs`` holds at least three pair records, each ``"A,B=FILE"`` (the
    command line's ``--pair``) or a tuple ``(A, B, data)`` where ``data`` is
    a :class:`Record`, a file or an array of x_A − x_B (with ``tau0``); a
    mapping ``{(A, B): data}`` is taken too. Files are read with
    ``read_options``. ``sessions`` is ``"simultaneous"`` (pairs sharing a
    clock share its noise) or ``"separate"``. ``dev``: adev, oadev, mdev,
    tdev, hdev, ohdev. A separated variance that is not positive is
    reported as the upper bound the data allow, never clipped."""
    items: List[Any]
    if isinstance(pairs, Mapping):
        items = [(k[0], k[1], v) for k, v in pairs.items()]
    elif isinstance(pairs, (str, os.PathLike)):
        items = [pairs]
    else:
        items = list(pairs)
    triples = []
    for p in items:
        if isinstance(p, str):
            a, b, path = _tauwise.pair_spec(p)
            triples.append((a, b, _record(path, tau0, kind, read_options)))
        else:
            try:
                a, b, d = p
            except (TypeError, ValueError):
                raise ValueError(
                    f"pairs: {p!r}: expected \"A,B=FILE\" or a tuple (A, B, data)"
                ) from None
            triples.append((str(a), str(b), _record(d, tau0, kind, read_options)))
    taus_text = taus if isinstance(taus, str) else ",".join(_text(t) or "" for t in taus)
    text = _tauwise.separate(
        triples,
        dev,
        method,
        sessions,
        _text(seed),
        taus_text,
        _text(confidence),
        remove_drift=remove_drift,
        plot=_path(plot),
    )
    return Result("separate", text)


def timeline(
    data: Any,
    tau0: Union[float, str, None] = None,
    kind: Optional[str] = None,
    *,
    window: str,
    step: str,
    dev: str = "oadev",
    taus: Union[str, Sequence[Union[float, str]]] = "octave",
    confidence: float = DEFAULT_CONFIDENCE,
    event_confidence: float = EVENT_CONFIDENCE,
    remove_drift: Optional[str] = None,
    plot: Optional[PathLike] = None,
    **read_options: Any,
) -> Result:
    """σ(τ) in a window sliding along the record (dynamic Allan variance)
    and the windows that depart from the whole record — ``tauwise
    timeline``. ``window`` and ``step`` are durations with their unit
    (``"6h"``, ``"15min"``), whole numbers of τ0; ``dev`` is oadev, mdev,
    tdev or ohdev; a window departs at τ when its interval (at
    ``event_confidence``) and the whole record's do not overlap, and the
    document gives the expected false-alarm fraction beside it."""
    rec = _record(data, tau0, kind, read_options)
    taus_text = taus if isinstance(taus, str) else ",".join(_text(t) or "" for t in taus)
    text = _tauwise.timeline(
        rec,
        _text(window),
        _text(step),
        dev,
        taus_text,
        _text(confidence),
        _text(event_confidence),
        remove_drift=remove_drift,
        plot=_path(plot),
    )
    return Result("timeline", text)


def wander(
    data: Any,
    tau0: Union[float, str, None] = None,
    kind: Optional[str] = None,
    *,
    masks: Union[str, Sequence[str], None] = None,
    limit_files: Union[PathLike, Sequence[PathLike], None] = None,
    taus: Optional[str] = None,
    tau_range: Optional[str] = None,
    remove_offset: bool = False,
    te_filter: Optional[str] = None,
    te: bool = False,
    cte_window: Optional[str] = None,
    decision_rule: Optional[str] = None,
    conformance: Union[float, str, None] = None,
    plot: Optional[PathLike] = None,
    **read_options: Any,
) -> Result:
    """TIE statistics, MTIE and TDEV of a time-error record against masks
    (``masks``: ``g811``, ``g8272-prtc-a``, ``g8262-opt1``; ``limit_files``
    your own) — ``tauwise wander``. Each verdict says which τ it checked and
    how much of the mask that covers; ``gate`` is ``"pass"``,
    ``"exceeds"``, ``"not-judged"`` or ``"undecided"`` (a guarded decision rule).

    ``decision_rule`` (``"simple"``, the default, or ``"guarded"``) and
    ``conformance`` (in (0.5, 1), default 0.95) say how a verdict is
    reached from the estimate and its uncertainty (``--decision-rule``,
    ``--conformance``; ``docs/decision-rules.md``): under ``guarded`` a
    verdict is ``undecided`` unless the probability of conformance (or of
    non-conformance) reaches the level.
    MTIE has no distribution here, so its masks are decided at the
    estimate under either rule (and say so); TDEV masks use the χ²
    probability at each τ."""
    rec = _record(data, tau0, kind, read_options)
    text, gate = _tauwise.wander(
        rec,
        taus=taus,
        tau_range=tau_range,
        masks=_strings(masks),
        limit_files=_strings(limit_files),
        remove_offset=remove_offset,
        te_filter=te_filter,
        te=te,
        cte_window=_text(cte_window),
        decision_rule=decision_rule,
        conformance=_text(conformance),
        plot=_path(plot),
    )
    return Result("wander", text, gate)


def holdover(
    data: Any,
    tau0: Union[float, str, None] = None,
    kind: Optional[str] = None,
    *,
    span: str,
    budget: str,
    paths: int = 2000,
    seed: int = 1,
    steps: int = 4096,
    te0: str = "0s",
    y0: Union[float, str, None] = None,
    y0_sigma: Union[float, str, None] = None,
    settle: Optional[str] = None,
    start: Optional[str] = None,
    aging: Optional[str] = None,
    aging_model: str = "linear",
    temp_coeff: Optional[str] = None,
    temp_swing: Optional[str] = None,
    model: Optional[str] = None,
    decision_rule: Optional[str] = None,
    conformance: Union[float, str, None] = None,
    plot: Optional[PathLike] = None,
    **read_options: Any,
) -> Result:
    """Time error through a holdover ``span`` against a ``budget`` (both with
    their unit: ``"24h"``, ``"1.5us"``), with aging fitted on the record and
    a seeded Monte Carlo of the fitted noise model — ``tauwise holdover``.

    ``decision_rule`` (``"simple"``, the default, or ``"guarded"``) and
    ``conformance`` (in (0.5, 1), default 0.95) say how a verdict is
    reached from the estimate and its uncertainty (``--decision-rule``,
    ``--conformance``; ``docs/decision-rules.md``): under ``guarded`` a
    verdict is ``undecided`` unless the probability of conformance (or of
    non-conformance) reaches the level.
    For holdover the probability is the fraction of Monte Carlo paths
    whose |TE| stays within the budget through the span."""
    rec = _record(data, tau0, kind, read_options)
    text, gate = _tauwise.holdover(
        rec,
        _text(span),
        _text(budget),
        _text(paths),
        _text(seed),
        _text(steps),
        _text(te0),
        y0=_text(y0),
        y0_sigma=_text(y0_sigma),
        settle=_text(settle),
        start=_text(start),
        aging=_text(aging),
        aging_model=aging_model,
        temp_coeff=_text(temp_coeff),
        temp_swing=_text(temp_swing),
        model=model,
        decision_rule=decision_rule,
        conformance=_text(conformance),
        plot=_path(plot),
    )
    return Result("holdover", text, gate)


def simulate(
    model: str,
    tau0: Union[float, str] = "1s",
    points: Union[int, str] = 100_000,
    seed: int = 1,
    *,
    data: str = "phase",
    offset: Union[float, str, None] = None,
    drift: Optional[str] = None,
    out: Optional[PathLike] = None,
    units: Optional[str] = None,
    carrier: Union[float, str, None] = None,
) -> Record:
    """A seeded power-law noise record (Kasdin & Walter 1992) from a model in
    h_α notation (``"h0=1e-22,h-1=3e-26"``) — ``tauwise simulate``. With
    ``out`` the record is also written as the command writes it (``units``
    of the file's values), and the returned record names that file."""
    return Record(
        _tauwise.simulate(
            model,
            _text(tau0),
            _text(points),
            _text(seed),
            data,
            offset=_text(offset),
            drift=drift,
            out=_path(out),
            units=units,
            carrier=_text(carrier),
        )
    )


def report(
    duts: Union[PathLike, Sequence[PathLike]],
    out: Optional[PathLike] = None,
    *,
    confidence: float = DEFAULT_CONFIDENCE,
    decision_rule: Optional[str] = None,
    conformance: Union[float, str, None] = None,
) -> Result:
    """The HTML report of a DUT file, or the comparison of several, written
    to ``out`` (atomically) when given — ``tauwise report``. Returns the
    verdict matrix (``tauwise report … --format json``) with its gate.

    ``decision_rule`` and ``conformance``, when given, take the place of
    the DUT files' ``decision_rule`` and ``conformance`` (as
    ``--decision-rule`` and ``--conformance`` do); see :func:`stability`."""
    text, gate = _tauwise.report(
        _strings(duts),
        _path(out),
        _text(confidence),
        decision_rule=decision_rule,
        conformance=_text(conformance),
    )
    return Result("report", text, gate)


def device(
    dut: PathLike,
    *,
    confidence: float = DEFAULT_CONFIDENCE,
    decision_rule: Optional[str] = None,
    conformance: Union[float, str, None] = None,
) -> "DevicePart":
    """One device of a fleet, computed on its own (its report built from its
    DUT file, the same path as :func:`report`) and kept as its part of the
    verdict matrix: small and picklable, so that a distributed engine can
    compute devices on many machines (``examples/fleet_dask.py``).
    ``decision_rule`` and ``conformance`` as in :func:`report`."""
    return _tauwise.device(
        os.fspath(dut),
        _text(confidence),
        decision_rule=decision_rule,
        conformance=_text(conformance),
    )


def fleet(parts: Iterable["DevicePart"]) -> Result:
    """The verdict matrix of devices computed apart (:func:`device`): the
    same document as :func:`report` over their DUT files (``--format
    json``), ranking and answer included."""
    text, gate = _tauwise.fleet(list(parts))
    return Result("report", text, gate)
