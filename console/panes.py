"""The console's panes as one table: it drives the app's layout (tabs), the keys that switch panes, the tab labels
and the help screen. A new pane is one row here."""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass

from textual.binding import Binding, BindingType
from textual.widget import Widget

from .pane_arith import ArithmeticPane
from .pane_neighbours import NeighboursPane
from .pane_notebook import NotebookPane
from .pane_similarity import SimilarityPane
from .pane_terms import TermsPane


@dataclass(frozen=True)
class PaneSpec:
    id: str
    label: str
    keys: str  # Textual key names, comma-separated; the first is shown on the tab
    make: Callable[[str | None], Widget]  # from the notebook path
    focus: str  # the widget that gets the focus when the pane is opened
    bindings: Sequence[BindingType]

    @property
    def tab_label(self) -> str:
        return f"{self.label} {self.keys.split(',')[0].upper()}"

    def binding(self) -> Binding:
        return Binding(self.keys, f"pane('{self.id}')", self.label, id=f"app.{self.id}")


PANES: tuple[PaneSpec, ...] = (
    PaneSpec("neighbours", "Neighbours", "f2", lambda nb: NeighboursPane(), "#nb-word", NeighboursPane.BINDINGS),
    PaneSpec("arith", "Arithmetic", "f3", lambda nb: ArithmeticPane(), "#ar-expr", ArithmeticPane.BINDINGS),
    PaneSpec("similarity", "Similarity", "f4", lambda nb: SimilarityPane(), "#sm-words", SimilarityPane.BINDINGS),
    PaneSpec("notebook", "Notebook", "f5", lambda nb: NotebookPane(nb), "#nbk-list", NotebookPane.BINDINGS),
    PaneSpec("terms", "Terms", "f6", lambda nb: TermsPane(nb), "#tm-table", TermsPane.BINDINGS),
)
BY_ID = {p.id: p for p in PANES}
