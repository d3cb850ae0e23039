"""The idea sections of the window: the interface (:mod:`.base`), the Rules section
(:mod:`.rules`) and the list the window shows (:mod:`.registry`)."""
