# dock_from dock_to
# (no rows exported)
