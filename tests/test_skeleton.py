"""The package skeleton imports and the CLI answers (common practice for a console tool)."""

from analysis import columns as C
from analysis.session import Session
from tidemark.cli import EXIT_BAD_INPUT, main


def test_required_columns_are_the_four_gas_exchange_signals():
    assert C.REQUIRED == ("t_s", "vo2_ml_min", "vco2_ml_min", "ve_l_min")


def test_cli_without_command_is_bad_input(capsys):
    assert main([]) == EXIT_BAD_INPUT


def test_session_has_reports_missing_columns():
    import pandas as pd

    s = Session(meta={}, breaths=pd.DataFrame({"t_s": [0.0], "vo2_ml_min": [300.0]}))
    assert s.has("vo2_ml_min") and not s.has("hr_bpm")
