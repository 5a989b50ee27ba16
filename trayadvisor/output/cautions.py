"""The cautions every output shows (README, UI help, CLI output, exports and reports)."""

#: The full cautions, one paragraph each.
CAUTIONS: tuple[str, ...] = (
    "The figures come from an idealised model: long straight conductors in free space; "
    "steel and aluminium only as the plates and solid sheet trays the layout describes, long "
    "and straight like the cables, of linear material (no saturation or hysteresis; typical "
    "material data recalled from memory), each insulated body carrying no net current; "
    "ladder and mesh trays, perforations, joints and building steel are not modelled, nor "
    "induced currents in the earth; cable screens and passive loops only as the layout "
    "describes them. Measure installed fields (IEC 61786 describes how).",
    "The tool does not check ampacity, grouping derating, voltage drop, fault withstand, tray "
    "loading or segregation distances: defer to the local wiring rules and to licensed "
    "practice.",
    "People with active implanted medical devices may be affected at levels far below the "
    "general exposure reference levels.",
)

#: The same in one line, for terminal output.
CAUTION_LINE = (
    "Caution: idealised model (long straight conductors in free space; steel and aluminium "
    "only as the layout's plates, linear, no saturation; no building steel, no earth "
    "currents); measure installed fields; no ampacity, derating, voltage-drop, "
    "fault or segregation checks; people with active implants may be affected far below "
    "exposure reference levels; defer to local wiring rules and licensed practice."
)
