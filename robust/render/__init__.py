"""Rendering: results as terminal text and as the sign-off report (no mathematics here).

Architecture (imports flow downwards only):

    writer        the report directory: refuses foreign directories, writes the files
    html, markdown   renderers of the block tree (markup and escaping live only here)
    notebook      cases and results as HTML fragments for a notebook (blocks of content, via html)
    content       what the report says, in order, as neutral blocks (blocks.py)
    certificate   the verdict's evidence: Routh arrays, witness, undecided remainder
    figures       the pictures (matplotlib, Agg canvas, imported lazily)
    loopfigure    the loop-response picture (magnitude and phase of L = N/D)
    canvas        the blank figure, its PNG bytes and the "not drawn" picture
    figdata       the numbers behind the pictures (value set, roots, loop response), numpy only
    data          result.json: the other commands' JSON in one object
    text          terminal text of every command
    fmt, blocks   number formatting; the block types

The package sits above every analysis module and below the command line; nothing in
``robust`` outside ``cli`` imports it. The analyses a report shows are run by
:func:`robust.analysis.signoff.analyse`.

Import from the modules themselves (``robust.render.writer.write_report``): this package
re-exports nothing, so that the terminal renderers (``robust.render.text``) load without the
report's analyses and libraries.
"""
