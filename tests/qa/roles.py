"""The role table of DESIGN.md as the API tests use it: who sees, who edits, and a client per persona.

"crew" is the electrical crew lead, "crew_other_trade" the drywaller, "outsider" the inspector of another
job; an anonymous API call answers 403 (session auth comes first and sends no challenge).
"""

from __future__ import annotations

ROLES = ["inspector", "crew", "crew_other_trade", "owner", "outsider", "anonymous"]
#: Reading a job's objects: every member; an outsider does not learn the job exists.
SEE = {
    "inspector": 200,
    "crew": 200,
    "crew_other_trade": 200,
    "owner": 200,
    "outsider": 404,
    "anonymous": 403,
}
#: Adding or editing walls, seal points, findings: the inspector only (None = the endpoint's success code).
EDIT = {
    "inspector": None,
    "crew": 403,
    "crew_other_trade": 403,
    "owner": 403,
    "outsider": 404,
    "anonymous": 403,
}


def as_role(world, api, role):
    """A DRF client signed in as ``role`` of the ``world`` fixture (or anonymous)."""
    return api(None if role == "anonymous" else world.users()[role])
