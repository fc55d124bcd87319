"""Every sub-command's help renders (argparse %-formatting in help texts fails only when printed)."""

from __future__ import annotations

import pytest

from network_models.cli import COMMANDS, build_parser, main


def test_top_level_help(capsys):
    with pytest.raises(SystemExit) as exc:
        main(["--help"])
    assert exc.value.code == 0
    out = capsys.readouterr().out
    for name in ("fit", "crosslinks", "swell", "report", "serve"):
        assert name in out


@pytest.mark.parametrize("name", [*COMMANDS, "compare"])
def test_each_command_help(name, capsys):
    parser = build_parser()
    sub = parser._subparsers._group_actions[0].choices
    assert name in sub, f"command {name} is listed in cli.COMMANDS but has no parser"
    sub[name].format_help()  # raises on a stray % in a help text


def test_no_command_prints_help(capsys):
    assert main([]) == 0
    assert "COMMAND" in capsys.readouterr().out


def test_a_missing_command_module_is_an_error(monkeypatch):
    """A command listed in ``cli.COMMANDS`` whose module does not exist stops the parser (no silent skip)."""
    import network_models.cli as cli

    monkeypatch.setattr(cli, "COMMANDS", (*cli.COMMANDS, "no_such_command"))
    with pytest.raises(ModuleNotFoundError, match="no_such_command"):
        cli.build_parser()
