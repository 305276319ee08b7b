"""The caution every judging output carries: one text, in the forms the edges need.

Flicker can hurt people, and flickerkit's figures are engineering assessments,
not certifications. This module is the one home of that text; the terminal
(:data:`TERMINAL`), JSON (key ``caution``: :data:`CAUTION`), workbooks
(:data:`WORKBOOK`), the report (:data:`REPORT`) and the judgement summary
(:data:`NOT_CERTIFICATION`) take it from here. It has no imports beyond the
standard library so that ``flickerkit --help`` stays fast.
"""

from __future__ import annotations

import textwrap

#: What modulated light can do to people.
HEALTH = ("Modulated light at roughly 3-70 Hz can trigger seizures in people with "
          "photosensitive epilepsy, and modulation at higher frequencies can cause "
          "headaches and other effects.")

#: What flickerkit's judgement is, and who decides compliance.
NOT_CERTIFICATION = ("flickerkit gives an engineering assessment of the captures or models "
                     "given to it, not a certification; the applicable standards, local "
                     "codes and an accredited laboratory decide compliance.")

#: The caution as one line (JSON key ``caution``, document properties).
CAUTION = f"{HEALTH} {NOT_CERTIFICATION}"

#: The caution as a workbook note.
WORKBOOK = f"Caution: {CAUTION}"

#: The caution for the terminal and ``--help``: wrapped, ``caution:`` first, newline last.
TERMINAL = textwrap.fill(f"caution: {CAUTION[0].lower()}{CAUTION[1:]}", width=79) + "\n"

#: What a report adds: its recalled limits and provisional calibration.
RECALLED = ("Several limits and constants are recalled rather than read in their documents, "
            "and the Pst LM calibration is provisional; see the method notes.")

#: The cautions every report carries (summary sheet and terminal), in order.
REPORT = (CAUTION, RECALLED)

__all__ = ["CAUTION", "HEALTH", "NOT_CERTIFICATION", "RECALLED", "REPORT", "TERMINAL", "WORKBOOK"]
