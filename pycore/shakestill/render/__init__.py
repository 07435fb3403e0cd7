"""Output: one SVG renderer for the CLI and the page, and the words of the reports.

``svg`` primitives (escaping, ink, ticks); ``schematic`` the rig to scale;
``chart_svg`` the stability chart and its axis mapping; ``plots`` line plots,
basin, loads and fit plots; ``report`` the check and run-up words and
``jsonable``; ``motion_report`` the words for motion, tolerance, loads, fit.
"""
