"""The check itself, read top to bottom: a model file -> its members (``read``) -> + their
forces (``forces``) -> rule-set rows, suggestions and coverage (``check``), in the values of
``model``. Nothing here knows how the work is run (processes, memory files, clusters): that is
``modelcheck.run``, which calls these stages and chooses where the rows go (a :class:`RowSink`).

    data = read_model("hall.ifc", ForceOptions(tables=(table,)))
    result = check_read(data, "steel-asd-us")
"""
