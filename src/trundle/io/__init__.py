"""Reading and writing at the edges: units, the model file (one module per table kind), output sets.

The model-file schema is composed here and only here: the ``[beam]``/``[sections]`` reader in
:mod:`trundle.io.modelfile` knows no other table, and each table kind's module
(:mod:`trundle.io.loads` for ``[[load]]``, :mod:`trundle.io.cranes` for ``[[crane]]`` and
``[runway]``, :mod:`trundle.io.design_tables` for the design tables ``[[permanent]]``,
``[[design_load]]``, ``[[live_pattern]]``, ``[[lane_length_load]]``, ``[[combination]]`` and
``[design]``, :mod:`trundle.io.project` for ``[project]``) knows nothing of the registry.
A new table kind is a new module plus one line below.
"""

from trundle.io import cranes, design_tables, loads, modelfile, project

modelfile.register_table(loads.TABLE, loads.read_loads)
modelfile.register_table(cranes.CRANE_TABLE, cranes.read_cranes)
modelfile.register_table(cranes.RUNWAY_TABLE, cranes.read_runway)
modelfile.register_table(project.PROJECT_TABLE, project.read_project)
for _name, _reader in design_tables.READERS.items():
    modelfile.register_table(_name, _reader)

ModelFileError = modelfile.ModelFileError
load_model = modelfile.load_model

__all__ = ["ModelFileError", "cranes", "design_tables", "load_model", "loads", "modelfile",
           "project"]
