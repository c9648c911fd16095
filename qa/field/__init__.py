"""Field rating: the rooms on each face of a wall, its junctions, field tests and the field prediction.

Split by feature: :mod:`.choices` (vocabularies), :mod:`.inputs` (record → engine inputs),
:mod:`.prediction` (the cached field prediction of a wall), :mod:`.tests_data` (field-test bands,
CSV import and the engine's descriptors), :mod:`.plan` (the job's test plan). Every predicted value
is an estimate by ISO 12354-1, not a field test.
"""
