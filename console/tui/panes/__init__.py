"""The console's panes as one table: it drives the app's layout (tabs), the keys that switch panes, the tab labels
and the help screen. A new pane is one row here."""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass

from textual.binding import Binding, BindingType
from textual.widget import Widget

from wordkin.console.tui.panes.arithmetic import ArithmeticPane
from wordkin.console.tui.panes.neighbours import NeighboursPane
from wordkin.console.tui.panes.notebook import NotebookPane
from wordkin.console.tui.panes.release import CheckupPane, ComparePane
from wordkin.console.tui.panes.similarity import SimilarityPane
from wordkin.console.tui.panes.terms import TermsPane


@dataclass(frozen=True)
class PaneSpec:
    id: str
    label: str
    #: Textual key names, comma-separated; the first is shown on the tab. Alt+letter (Esc, then the letter) is
    #: for terminals without F-keys; Alt+digit is not used: Textual reads Esc+digit as macOS Option characters.
    keys: str
    make: Callable[[str | None], Widget]  # from the notebook path
    focus: str  # the widget that gets the focus when the pane is opened
    bindings: Sequence[BindingType]
    tab: str = ""  # a short name for the tab (eight tabs share 80 columns)

    @property
    def tab_label(self) -> str:
        return f"{self.tab or self.label} {self.keys.split(',')[0].upper()}"

    def binding(self) -> Binding:
        # priority: an Alt+digit must switch panes even when a text box has the focus
        first, *rest = self.keys.split(",")
        shown = "/".join([first] + [k.replace("alt+", "M-") for k in rest])  # the footer shows both: f2/M-n
        return Binding(
            self.keys, f"pane('{self.id}')", self.label, id=f"app.{self.id}", priority=True, key_display=shown
        )


PANES: tuple[PaneSpec, ...] = (
    PaneSpec(
        "neighbours", "Neighbours", "f2,alt+n", lambda nb: NeighboursPane(), "#nb-word", NeighboursPane.BINDINGS, "Near"
    ),
    PaneSpec(
        "arith", "Arithmetic", "f3,alt+a", lambda nb: ArithmeticPane(), "#ar-expr", ArithmeticPane.BINDINGS, "Calc"
    ),
    PaneSpec(
        "similarity", "Similarity", "f4,alt+s", lambda nb: SimilarityPane(), "#sm-words", SimilarityPane.BINDINGS, "Sim"
    ),
    PaneSpec("notebook", "Notebook", "f5,alt+b", lambda nb: NotebookPane(nb), "#nbk-list", NotebookPane.BINDINGS),
    PaneSpec("terms", "Terms", "f6,alt+t", lambda nb: TermsPane(nb), "#tm-table", TermsPane.BINDINGS),
    PaneSpec("compare", "Compare", "f7,alt+o", lambda nb: ComparePane(), "#cmp-table", ComparePane.BINDINGS),
    PaneSpec("checkup", "Checkup", "f8,alt+k", lambda nb: CheckupPane(), "#chk-report-box", CheckupPane.BINDINGS),
)
BY_ID = {p.id: p for p in PANES}
