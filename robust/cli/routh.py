"""``robust routh``: the exact Routh array (or, in z, the Schur-Cohn table) of one polynomial."""

from __future__ import annotations

import click

from .core import emit_json, main

#: The example polynomial ``robust routh`` analyses when given none: the closed loop of a
#: small speed-controlled fan (invented for the demo).
EXAMPLE_POLYNOMIAL = "s^4 + 6*s^3 + 13.5*s^2 + 12*s + 4.2"
#: routh --discrete without a polynomial: (z - 0.5)(z^2 - 0.8 z + 0.2), every root inside |z| < 1
EXAMPLE_DISCRETE = "z^3 - 1.3*z^2 + 0.6*z - 0.1"


class _PolynomialCommand(click.Command):
    """A command whose argument may start with a minus sign: ``robust routh "-(s+1)*(s-2)"``.

    A word that starts with one ``-``, is not one of the command's options and is not an
    option's value is the polynomial, as if written after ``--``; ``--`` itself works too.
    """

    def parse_args(self, ctx: click.Context, args: list[str]) -> list[str]:
        names: dict[str, bool] = {}  # option name -> whether it takes a value
        for param in self.get_params(ctx):
            if isinstance(param, click.Option):
                for name in (*param.opts, *param.secondary_opts):
                    names[name] = not param.is_flag and not param.count
        kept: list[str] = []
        moved: list[str] = []
        words = iter(args)
        for word in words:
            if word == "--":
                moved.extend(words)
                break
            if word in names or word.split("=", 1)[0] in names:
                kept.append(word)
                if names.get(word):  # the option's value follows, even when it starts with '-'
                    value = next(words, None)
                    if value is not None:
                        kept.append(value)
            elif word.startswith("-") and not word.startswith("--") and len(word) > 1:
                moved.append(word)
            else:
                kept.append(word)
        return super().parse_args(ctx, [*kept, "--", *moved] if moved else kept)


@main.command("routh", cls=_PolynomialCommand)
@click.argument("polynomial", required=False)
@click.option("--coeffs", help='Coefficients highest power first, e.g. "1, 2, 3".')
@click.option("--shift", "sigma", default="0", show_default=True,
              help="Count roots relative to the line Re(s) = -SIGMA.")
@click.option("--discrete", is_flag=True,
              help="A polynomial in z: the Schur-Cohn table and the roots inside, on and outside "
                   "the unit circle (or the circle of --radius).")
@click.option("--radius", default="1", show_default=True,
              help="With --discrete: count relative to the circle |z| = RADIUS.")
@click.option("--json", "as_json", is_flag=True, help="Print one JSON document.")
def routh_command(polynomial: str | None, coeffs: str | None, sigma: str, discrete: bool, radius: str,
                  as_json: bool) -> None:
    """Exact Routh array of POLYNOMIAL (an expression in s) and its root counts.

    Without POLYNOMIAL or --coeffs, a built-in example is used. A polynomial may start
    with a minus sign, as in robust routh "-(s+1)*(s-2)"; after -- everything is the
    polynomial. With --discrete the polynomial is in z, and the table is the Schur-Cohn
    reduction for the unit circle.

    Exit codes: 0 the table was computed (whatever the roots), 2 bad input.
    """
    from ..errors import InputError
    from ..model.forms import routh_table
    from ..render.text import render_table

    if polynomial is not None and coeffs is not None:
        raise InputError("routh", "give either POLYNOMIAL or --coeffs, not both")
    if discrete:
        _discrete_routh(polynomial, coeffs, sigma, radius, as_json)
        return
    if coeffs is not None:
        source: object = _coefficient_items(coeffs)
    else:
        source = polynomial if polynomial is not None else EXAMPLE_POLYNOMIAL
    table = routh_table(source, shift=sigma)
    if as_json:
        emit_json(table.as_dict())
    else:
        # with a shift, the plain polynomial's counts tell "unstable" from "slower than asked"
        unshifted = routh_table(source).roots if table.shift else None
        click.echo(render_table(table, unshifted))


def _discrete_routh(polynomial: str | None, coeffs: str | None, sigma: str, radius: str,
                    as_json: bool) -> None:
    """routh --discrete: the Schur-Cohn table and the counts relative to |z| = radius."""
    from ..errors import InputError
    from ..exact.numbers import to_fraction
    from ..model.forms import discrete_table
    from ..render.text import render_schur_cohn

    if to_fraction(sigma, "--shift") != 0:
        raise InputError("--shift", "applies to the s-plane, not with --discrete",
                         "--radius R to count relative to the circle |z| = R")
    r = to_fraction(radius, "--radius")
    if r <= 0:
        raise InputError("--radius", "must be positive", "a number such as 0.9", radius)
    source = _coefficient_items(coeffs) if coeffs is not None else \
        (polynomial if polynomial is not None else EXAMPLE_DISCRETE)
    result = discrete_table(source, r)
    if as_json:
        emit_json(result.as_dict())
    else:
        click.echo(render_schur_cohn(result.coefficients, result.table, result.counts, r))


def _coefficient_items(coeffs: str) -> list[str]:
    from ..errors import InputError

    items = [c.strip() for c in coeffs.replace(";", ",").split(",")]
    if any(not c for c in items):
        raise InputError("--coeffs", "empty coefficient in the list",
                         'numbers separated by commas, e.g. "1, 2.5, 3"', coeffs)
    return items


