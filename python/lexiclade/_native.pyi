"""Type stubs of the native module; the docstrings live in the module itself
(``help(lexiclade.Clusters)``)."""

import os
from typing import Any, Iterable, Optional, Sequence, Union

_Path = Union[str, "os.PathLike[str]"]

__version__: str

class Clusters:
    """Word clusters: every clustered word with its class, path and count."""

    @staticmethod
    def learn(
        lines: Union[str, Iterable[str], None] = None,
        *,
        files: Union[_Path, Sequence[_Path], None] = None,
        classes: int = 1000,
        min_count: int = 1,
        tokenize: bool = False,
        lowercase: bool = False,
        nfc: bool = False,
        threads: Optional[int] = None,
        exchange_passes: int = 0,
        exchange_min_gain: Optional[float] = None,
    ) -> "Clusters": ...
    @staticmethod
    def load(dir: _Path) -> "Clusters": ...
    def save(self, dir: _Path, *, force: bool = False) -> None: ...
    def path(self, word: str) -> Optional[str]: ...
    def prefix(self, word: str, bits: int) -> Optional[str]: ...
    def words(self, prefix: str) -> list[str]: ...
    def nearest(self, word: str, k: int = 10) -> list[str]: ...
    def to_records(self) -> list[dict[str, Any]]: ...
    @property
    def summary(self) -> dict[str, Any]: ...
    @property
    def classes(self) -> int: ...
    @property
    def ami_bits(self) -> float: ...
    @property
    def lowercase(self) -> bool: ...
    @property
    def nfc(self) -> bool: ...
    def __len__(self) -> int: ...
    def __contains__(self, word: str) -> bool: ...

class Features:
    """The feature strings a feature config gives each token."""

    def __init__(
        self,
        config: Optional[_Path] = None,
        *,
        clusters: Union[Clusters, _Path, None] = None,
        cluster_sets: Optional[dict[str, Union[Clusters, _Path]]] = None,
    ) -> None: ...
    def sentence(
        self,
        tokens: Sequence[str],
        columns: Optional[Sequence[Sequence[str]]] = None,
    ) -> list[list[str]]: ...
    def sentences(
        self, sentences: Sequence[Sequence[str]]
    ) -> list[list[list[str]]]: ...
    @property
    def columns(self) -> list[tuple[int, str]]: ...
    @property
    def config(self) -> str: ...
    @property
    def uses_clusters(self) -> bool: ...

_Labeled = Union[_Path, Sequence[tuple[Sequence[str], Sequence[str]]]]

class Tagger:
    """A trained averaged-perceptron tagger."""

    @staticmethod
    def train(
        train: _Labeled,
        dev: Optional[_Labeled] = None,
        *,
        config: Optional[_Path] = None,
        clusters: Union[Clusters, _Path, None] = None,
        epochs: int = 10,
        seed: int = 1,
        prune: bool = True,
        scheme: Optional[str] = None,
        token_column: int = 1,
        label_column: int = -1,
        refit: bool = False,
        cluster_sets: Optional[dict[str, Union[Clusters, _Path]]] = None,
    ) -> "Tagger": ...
    @staticmethod
    def load(path: _Path) -> "Tagger": ...
    def save(self, path: _Path, *, force: bool = False) -> None: ...
    def tag(
        self,
        sentences: Sequence[Sequence[str]],
        columns: Optional[Sequence[Sequence[Sequence[str]]]] = None,
    ) -> list[list[str]]: ...
    @property
    def columns(self) -> list[tuple[int, str]]: ...
    @property
    def labels(self) -> list[str]: ...
    @property
    def scheme(self) -> str: ...
    @property
    def best_epoch(self) -> int: ...
    @property
    def feature_count(self) -> int: ...
    @property
    def uses_clusters(self) -> bool: ...

def score(
    gold: Sequence[Sequence[str]],
    pred: Sequence[Sequence[str]],
    scheme: Optional[str] = None,
) -> dict[str, Any]: ...
