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
from .pane_release import CheckupPane, ComparePane
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
    tab: str = ""  # a short name for the tab (eight tabs share 80 columns)

    @property
    def tab_label(self) -> str:
        return f"{self.tab or self.label} {self.keys.split(',')[0].upper()}"

    def binding(self) -> Binding:
        return Binding(self.keys, f"pane('{self.id}')", self.label, id=f"app.{self.id}")


PANES: tuple[PaneSpec, ...] = (
    PaneSpec(
        "neighbours", "Neighbours", "f2", lambda nb: NeighboursPane(), "#nb-word", NeighboursPane.BINDINGS, "Near"
    ),
    PaneSpec("arith", "Arithmetic", "f3", lambda nb: ArithmeticPane(), "#ar-expr", ArithmeticPane.BINDINGS, "Calc"),
    PaneSpec(
        "similarity", "Similarity", "f4", lambda nb: SimilarityPane(), "#sm-words", SimilarityPane.BINDINGS, "Sim"
    ),
    PaneSpec("notebook", "Notebook", "f5", lambda nb: NotebookPane(nb), "#nbk-list", NotebookPane.BINDINGS),
    PaneSpec("terms", "Terms", "f6", lambda nb: TermsPane(nb), "#tm-table", TermsPane.BINDINGS),
    PaneSpec("compare", "Compare", "f7", lambda nb: ComparePane(), "#cmp-table", ComparePane.BINDINGS),
    PaneSpec("checkup", "Checkup", "f8", lambda nb: CheckupPane(), "#chk-report-box", CheckupPane.BINDINGS),
)
BY_ID = {p.id: p for p in PANES}
