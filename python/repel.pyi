# Type stubs of the compiled module `repel` (python/module.cpp), copied beside the .so so that editors and type
# checkers complete and check calls. tests/python/test_stubs.py holds them to the module: every public name has a
# stub and every stub names something real, with the same parameters.
import os
from typing import Iterable, Iterator, Literal, Optional, Tuple, TypedDict, Union

import numpy as np
import numpy.typing as npt

__version__: str

_Notation = Literal["auto", "smiles", "formula"]
_Record = Union[str, Tuple[str, Optional[str]]]
_Path = Union[str, "os.PathLike[str]"]

class InputError(ValueError):
    """Input that cannot be read or built; .column is 1-based (None when not about a column)."""

    message: str
    column: Optional[int]
    text: str

class UnsupportedError(RuntimeError):
    """A well-formed input that repel cannot build yet."""

class _Conformer(TypedDict):
    rank: int
    count: int
    energy: float
    relative_energy: float
    rmsd_to_first: float

class Structure:
    """A built structure; atom indices 0-based."""

    @property
    def elements(self) -> list[str]: ...
    @property
    def numbers(self) -> npt.NDArray[np.int64]: ...
    @property
    def positions(self) -> npt.NDArray[np.float64]: ...
    @property
    def bonds(self) -> npt.NDArray[np.int64]: ...
    @property
    def charge(self) -> int: ...
    @property
    def multiplicity(self) -> int: ...
    @property
    def warnings(self) -> list[str]: ...
    @property
    def name(self) -> Optional[str]: ...
    @property
    def conformer(self) -> Optional[_Conformer]: ...
    def __len__(self) -> int: ...
    def __bool__(self) -> bool: ...
    def to_text(self, format: str) -> str: ...
    def write(self, path: _Path) -> None: ...
    def to_ase(self) -> "ase.Atoms": ...  # type: ignore[name-defined]  # ASE is optional, imported when called

class Failure:
    """A record of build_many() that could not be built; False in a boolean context."""

    @property
    def index(self) -> int: ...
    @property
    def text(self) -> str: ...
    @property
    def name(self) -> Optional[str]: ...
    @property
    def error(self) -> str: ...
    @property
    def message(self) -> str: ...
    @property
    def column(self) -> Optional[int]: ...
    def __bool__(self) -> bool: ...

class BuildMany(Iterator[Union[Structure, Failure]]):
    """The iterator build_many() returns."""

    def __iter__(self) -> "BuildMany": ...
    def __next__(self) -> Union[Structure, Failure]: ...

class _Finding(TypedDict):
    kind: str
    atoms: list[int]
    message: str
    measured: Optional[float]
    expected: Optional[float]
    unit: str
    severity: Literal["warning", "error"]

class _CheckResult(TypedDict):
    title: str
    line: int
    error: Optional[str]
    charge: int
    multiplicity: int
    findings: list[_Finding]
    notes: list[str]
    fixed: Optional[Structure]
    fix_summary: Optional[str]

def build(
    text: str,
    *,
    name: Optional[str] = None,
    refine: bool = True,
    notation: _Notation = "auto",
    multiplicity: Optional[int] = None,
    charge: Optional[int] = None,
) -> Structure: ...
def build_conformers(
    text: str,
    *,
    count: int = 10,
    rmsd: float = 0.5,
    tries: int = 0,
    seed: int = 1,
    name: Optional[str] = None,
    refine: bool = True,
    notation: _Notation = "auto",
    multiplicity: Optional[int] = None,
    charge: Optional[int] = None,
) -> list[Structure]: ...
def build_many(
    records: Iterable[_Record],
    *,
    threads: Optional[int] = None,
    refine: bool = True,
    notation: _Notation = "auto",
    multiplicity: Optional[int] = None,
    charge: Optional[int] = None,
) -> BuildMany: ...
def shape(text: str, *, name: Optional[str] = None) -> dict: ...
def check(
    source: Union[_Path, Structure, "ase.Atoms"],  # type: ignore[name-defined]
    *,
    charge: Optional[int] = None,
    multiplicity: Optional[int] = None,
    smiles: Optional[str] = None,
    fix: bool = False,
) -> list[_CheckResult]: ...
