"""The invented place of the demo: names and the note on invented data (no physics)."""

#: The invented building, for titles and reports.
BUILDING = ("living room of the top-floor flat, No. 9 Millrace Terrace, Fernhollow "
            "(invented building in an invented town)")

#: The statement about invented data carried by the report.
INVENTED_NOTE = ("The site (the town of Fernhollow), its weather year and the building are "
                 "INVENTED for this demo; the cost and hassle ranks are invented too. Use the "
                 "report to learn the workflow, not to judge any real building.")
