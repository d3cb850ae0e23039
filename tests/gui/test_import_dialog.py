"""The price import dialog: the preview shows the first file's cells and the field each column
is read as; the import runs on a worker and writes the folder that pandas then reads back
(reference: pandas.read_csv)."""

from __future__ import annotations

import pandas as pd

from hunchbook.gui.widgets.import_dialog import ImportDialog

LIBRARY = """[CORN]
multiplier = 50
tick_size = 0.25
currency = "USD"
commission = 1
exchange_fee = 1
regulatory_fee = 0
slippage_ticks = 1
"""


def _sources(tmp_path):
    src = tmp_path / "src"
    src.mkdir()
    for name, (a, b) in (("CORNH2020.csv", (380.25, 381.5)),
                         ("CORNZ2019.csv", (377, 378.75))):
        (src / name).write_text(f"Trade Date;Settle;Vol\n02/12/2019;{a};10\n03/12/2019;{b};12\n")
    (tmp_path / "lib.toml").write_text(LIBRARY)
    return src


def test_preview_then_import(qtbot, tmp_path):
    dialog = ImportDialog(None)
    qtbot.addWidget(dialog)
    dialog.add_sources([str(_sources(tmp_path))])
    dialog.into.setText(str(tmp_path / "data"))
    dialog.expiry.setText("CORN=before-day:15:1")
    dialog.date_format.setText("%d/%m/%Y")
    dialog.library.setText(str(tmp_path / "lib.toml"))
    dialog.preview()
    assert "2 files" in dialog.shape.text()
    assert "contract file: market CORN, contract CORNH2020" in dialog.shape.text()
    headers = [dialog.table.horizontalHeaderItem(c).text()
               for c in range(dialog.table.columnCount())]
    assert headers == ["Trade Date\n\u2192 date", "Settle\n\u2192 close", "Vol\n\u2192 volume"]
    assert dialog.table.item(0, 1).text() == "380.25"
    dialog.resize(900, 640)
    dialog.show()
    dialog.grab().save(str(tmp_path / "import-dialog.png"))
    with qtbot.waitSignal(dialog.imported, timeout=20000) as blocker:
        dialog.start_import()
    assert blocker.args[0] == tmp_path / "data"
    corn = pd.read_csv(tmp_path / "data" / "CORN.csv")
    assert list(corn["contract"]) == ["CORNZ2019", "CORNH2020", "CORNZ2019", "CORNH2020"]
    assert list(corn["close"]) == [377, 380.25, 378.75, 381.5]
    assert "CORN" in dialog.report.toPlainText()


def test_bad_settings_are_shown_not_raised(qtbot, tmp_path):
    dialog = ImportDialog(None)
    qtbot.addWidget(dialog)
    dialog.add_sources([str(_sources(tmp_path))])
    dialog.mapping.setText("close")
    dialog.preview()
    assert "Columns: 'close' is not NAME=VALUE" in dialog.shape.text()
    dialog.into.setText(str(tmp_path / "data"))
    dialog.start_import()
    assert dialog.report.toPlainText().startswith("Not imported: Columns:")
    assert not (tmp_path / "data").exists()
