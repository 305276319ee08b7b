"""What every refusal test checks: exit 1 and one line on stderr, never a traceback."""

from __future__ import annotations

from flickerkit.cli import main


def one_line_error(capsys, argv, match: str) -> str:
    """Run the CLI on ``argv``; assert exit 1 and one error line holding ``match``; return it."""
    assert main([str(a) for a in argv]) == 1
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("flickerkit: error: "), err
    assert match in err[0], err[0]
    assert "Traceback" not in err[0]
    return err[0]
