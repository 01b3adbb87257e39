"""Type stubs of the Rust extension tauwise._tauwise (python/src/lib.rs).

Use the package (``import tauwise``); these functions take option values as
text, as the command line does, and return the command's JSON document.
"""

from typing import List, Optional, Sequence, Tuple

import numpy as np
import numpy.typing as npt

__version__: str
DECISION_CAUTION: str
DEFAULT_CONFIDENCE: float
DEFAULT_CONFORMANCE: float
EVENT_CONFIDENCE: float

class Record:
    @staticmethod
    def from_array(
        values: npt.ArrayLike, tau0: str, kind: str, path: Optional[str] = None
    ) -> Record: ...
    @property
    def kind(self) -> str: ...
    @property
    def tau0(self) -> float: ...
    @property
    def gaps(self) -> int: ...
    @property
    def path(self) -> str: ...
    @property
    def preamble(self) -> List[str]: ...
    @property
    def info_json(self) -> Optional[str]: ...
    @property
    def notes(self) -> List[str]: ...
    @property
    def warnings(self) -> List[str]: ...
    def __len__(self) -> int: ...
    def phase(self) -> np.ndarray: ...
    def frequency(self) -> np.ndarray: ...

class DevicePart:
    @property
    def name(self) -> str: ...
    @property
    def dut(self) -> str: ...
    def json(self) -> str: ...
    def to_bytes(self) -> bytes: ...
    @staticmethod
    def from_bytes(b: bytes) -> DevicePart: ...

def read(
    path: str,
    data: Optional[str] = None,
    tau0: Optional[str] = None,
    units: Optional[str] = None,
    carrier: Optional[str] = None,
    value_column: Optional[str] = None,
    time_column: Optional[str] = None,
    snap: Optional[str] = None,
    wrap: Optional[str] = None,
    comment: Optional[str] = None,
    decimal_comma: bool = False,
    binary: Optional[str] = None,
) -> Record: ...
def stability(
    record: Record,
    dev: str,
    taus: str,
    confidence: str,
    noise_type: Optional[str] = None,
    uncorrected: bool = False,
    best: bool = False,
    remove_drift: Optional[str] = None,
    limit_files: Sequence[str] = ...,
    lf: Optional[str] = None,
    carrier: Optional[str] = None,
    bandwidth: Optional[str] = None,
    lf_uncertainty: Optional[str] = None,
    decision_rule: Optional[str] = None,
    conformance: Optional[str] = None,
    plot: Optional[str] = None,
) -> Tuple[str, str]: ...
def noise(record: Record, taus: str, remove_drift: Optional[str] = None) -> str: ...
def spectrum(
    record: Record,
    quantity: str,
    window: str,
    overlap: str,
    per_decade: str,
    all_bins: bool = False,
    segment: Optional[str] = None,
    carrier: Optional[str] = None,
) -> Tuple[str, List[str]]: ...
def wander(
    record: Record,
    taus: Optional[str] = None,
    tau_range: Optional[str] = None,
    masks: Sequence[str] = ...,
    limit_files: Sequence[str] = ...,
    remove_offset: bool = False,
    te_filter: Optional[str] = None,
    te: bool = False,
    cte_window: Optional[str] = None,
    decision_rule: Optional[str] = None,
    conformance: Optional[str] = None,
    plot: Optional[str] = None,
) -> Tuple[str, str]: ...
def holdover(
    record: Record,
    span: str,
    budget: str,
    paths: str,
    seed: str,
    steps: str,
    te0: str,
    y0: Optional[str] = None,
    y0_sigma: Optional[str] = None,
    settle: Optional[str] = None,
    start: Optional[str] = None,
    aging: Optional[str] = None,
    aging_model: str = "linear",
    temp_coeff: Optional[str] = None,
    temp_swing: Optional[str] = None,
    model: Optional[str] = None,
    decision_rule: Optional[str] = None,
    conformance: Optional[str] = None,
    plot: Optional[str] = None,
) -> Tuple[str, str]: ...
def simulate(
    model: str,
    tau0: str,
    points: str,
    seed: str,
    data: str,
    offset: Optional[str] = None,
    drift: Optional[str] = None,
    out: Optional[str] = None,
    units: Optional[str] = None,
    carrier: Optional[str] = None,
) -> Record: ...
def convert(
    to: str,
    lf: Optional[str] = None,
    model: Optional[str] = None,
    sigma: Optional[str] = None,
    quantity: Optional[str] = None,
    carrier: Optional[str] = None,
    dev: str = "adev,mdev",
    taus: str = "octave",
    max_tau: Optional[str] = None,
    tau0: Optional[str] = None,
    fh: Optional[str] = None,
    from_offset: str = "1",
    to_offset: Optional[str] = None,
    per_decade: str = "10",
) -> str: ...
def jitter(
    table: Optional[str],
    record: Optional[Record],
    carrier: str,
    bands: Sequence[str],
    quantity: Optional[str] = None,
    value_column: Optional[str] = None,
    filters: Sequence[str] = ...,
    filter_files: Sequence[str] = ...,
    filter_set: Optional[str] = None,
    period: bool = False,
    periods: Optional[str] = None,
    spurs: Optional[str] = None,
    ui_rate: Optional[str] = None,
    spur_search: bool = True,
    spur_threshold: Optional[str] = None,
    extrapolate: bool = False,
    limits: Sequence[str] = ...,
    limit_files: Sequence[str] = ...,
    window: str = "hann",
    segment: Optional[str] = None,
    decision_rule: Optional[str] = None,
    conformance: Optional[str] = None,
    plot: Optional[str] = None,
) -> Tuple[str, str, List[str]]: ...
def inspect(record: Record, outliers: str) -> str: ...
def prepare(
    record: Record,
    out: Optional[str] = None,
    remove_drift: Optional[str] = None,
    outliers: Optional[str] = None,
    fill_gaps: bool = False,
    decimate: Optional[str] = None,
) -> Record: ...
def pair_spec(text: str) -> Tuple[str, str, str]: ...
def separate(
    pairs: Sequence[Tuple[str, str, Record]],
    dev: str,
    method: str,
    sessions: str,
    seed: str,
    taus: str,
    confidence: str,
    remove_drift: Optional[str] = None,
    plot: Optional[str] = None,
) -> str: ...
def timeline(
    record: Record,
    window: str,
    step: str,
    dev: str,
    taus: str,
    confidence: str,
    event_confidence: str,
    remove_drift: Optional[str] = None,
    plot: Optional[str] = None,
) -> str: ...
def report(
    duts: Sequence[str],
    out: Optional[str],
    confidence: str,
    decision_rule: Optional[str] = None,
    conformance: Optional[str] = None,
) -> Tuple[str, str]: ...
def device(
    dut: str,
    confidence: str,
    decision_rule: Optional[str] = None,
    conformance: Optional[str] = None,
) -> DevicePart: ...
def fleet(parts: Sequence[DevicePart]) -> Tuple[str, str]: ...
