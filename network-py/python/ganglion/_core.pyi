"""Type stubs of the compiled module ``ganglion._core`` (use the functions
of ``ganglion`` instead: they check arguments and return dataclasses)."""

from typing import Any, Callable, Dict, List, Optional

class GanglionError(ValueError):
    """Bad input or a failed step: the message the ``ganglion`` binary prints."""

class NetworkHandle:
    @property
    def name(self) -> str: ...
    @property
    def n_pores(self) -> int: ...
    @property
    def n_throats(self) -> int: ...
    @property
    def hash(self) -> str: ...
    @property
    def warnings(self) -> List[str]: ...
    @property
    def source(self) -> str: ...
    def inspect_json(self) -> str: ...
    def pore_columns(self) -> Dict[str, Any]: ...
    def throat_columns(self) -> Dict[str, Any]: ...
    def write_csv(self, path: str) -> None: ...
    def write_gnet(self, path: str) -> None: ...

def load_network(path: str) -> NetworkHandle: ...
def generate_network(
    kind: str,
    value: str,
    label: str,
    progress: Optional[Callable[[str, int, int], Any]] = None,
) -> NetworkHandle: ...
def dict_to_toml(obj: Dict[str, Any]) -> str: ...
def run_study_raw(
    kind: str,
    value: str,
    label: str,
    base_dir: str,
    network: Optional[NetworkHandle] = None,
    progress: Optional[Callable[[str, int, int], Any]] = None,
    output: Optional[str] = None,
    png: bool = True,
    vtk: bool = True,
    vtk_ascii: bool = False,
    table_points: int = 21,
    table_units: str = "bar",
    threads: Optional[int] = None,
    overwrite: bool = False,
) -> Dict[str, Any]: ...
def run_sweep_raw(
    kind: str,
    value: str,
    label: str,
    base_dir: str,
    output: str,
    progress: Optional[Callable[[str, int, int], Any]] = None,
    threads: Optional[int] = None,
) -> Dict[str, Any]: ...
def version() -> str: ...
