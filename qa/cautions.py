"""Safety, code and liability cautions, as data.

Each caution is short, plain text for people on site or in the office, with the
basis it rests on. Seal-point templates (:mod:`qa.checklists`) name the caution
that applies to them by key; pages show :data:`GENERAL_CAUTIONS` everywhere a
rating, an audit or a report appears.

The content follows the safety and liability requirements collected in the
project's field-practice reference, section 3. Where that reference flags a
point as common practice or unverified, the ``basis`` says so.

References
----------
.. [1] ASTM C919-19, Standard Practice for Use of Sealants in Acoustical
   Applications, section 1.3 (does not address firestopping).
.. [2] International Building Code (ICC), sections 714 (penetrations), 715
   (joint systems), 717 (ducts and dampers); 2018/2021 editions.
.. [3] NFPA 80, Standard for Fire Doors and Other Opening Protectives,
   sections 4.8.4 and 6.3.1.7 (clearances), as summarised by door-hardware
   references.
.. [4] ASTM E336 and ISO 16283-1, field measurement of airborne sound
   insulation between rooms; ASTM E90 (laboratory results are an upper bound).
.. [5] 29 CFR 1926 (OSHA construction standards): 1926.100, 1926.501(b)(1),
   1926.502(i).
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass

__all__ = ["Caution", "CAUTIONS", "GENERAL_CAUTIONS", "cautions_for"]


@dataclass(frozen=True)
class Caution:
    """One caution shown beside the work it concerns.

    Parameters
    ----------
    key : str
        Stable slug; seal-point templates refer to it.
    title : str
        A few words, shown as the heading.
    text : str
        One to three plain sentences: what to do or not do.
    basis : str
        Where the caution comes from (code section, standard, or a flag that it
        is common practice with no source).
    """

    key: str
    title: str
    text: str
    basis: str


_ALL = (
    Caution(
        key="sealant_not_firestop",
        title="Acoustical sealant is not a firestop",
        text=(
            "Acoustical sealant closes sound leaks; it does not by itself keep fire out. "
            "In a fire-rated wall, a bead of acoustical sealant never replaces the listed "
            "firestop or joint system."
        ),
        basis="ASTM C919-19 §1.3 (scope excludes firestopping and safing); IBC §714, §715.",
    ),
    Caution(
        key="listed_firestop_systems",
        title="Rated wall: use the listed system",
        text=(
            "Where the wall is fire-rated, protect this penetration or joint per the listed "
            "firestop or joint system in the firestop submittal (or an approved engineering "
            "judgment): its packing, depth, annular space and sealant as listed. "
            "If the item does not match a listing, stop and ask the firestop installer or "
            "design team."
        ),
        basis=(
            "IBC §714 (penetrations), §715 (joints); ASTM E814 / UL 1479; ASTM E1966 / UL 2079; "
            "NFPA 70 (NEC) §300.21 for electrical penetrations."
        ),
    ),
    Caution(
        key="energised_boxes",
        title="Do not open energised boxes",
        text=(
            "Look at boxes from the open side of the wall; do not open, reach into or pad a box "
            "with live parts. Only a qualified electrician works on or near exposed live parts. "
            "In a rated wall, box size, spacing across faces and pads follow the code and the "
            "pad's listing."
        ),
        basis=(
            "NFPA 70E principle (common practice, no source); IBC §714.4.2 (2018/2021) "
            "box size, aggregate area and 24 in (610 mm) opposite-face separation."
        ),
    ),
    Caution(
        key="fire_dampers",
        title="Leave fire damper clearances open",
        text=(
            "Do not caulk, pack or screw into the expansion clearance or no-screw zones of a "
            "fire or fire/smoke damper. Treat the duct opening only as the damper listing and "
            "the approved detail say."
        ),
        basis="SMACNA fire damper installation guidance; damper listings to UL 555 / UL 555S; IBC §717.",
    ),
    Caution(
        key="fire_doors",
        title="Fire doors: stay within the label",
        text=(
            "Keep fire-door clearances within NFPA 80 (bottom at most 3/4 in / 19 mm; "
            "1/8 in ± 1/16 in / 3 mm ± 1.5 mm at head and jambs on steel doors). Use only "
            "gaskets and door bottoms listed for the door, and no field changes outside the "
            "label service rules. A sound fix that voids the label is not a fix."
        ),
        basis="NFPA 80 §4.8.4, §6.3.1.7 (via door-hardware summaries); door and gasket listings.",
    ),
    Caution(
        key="rated_assembly_changes",
        title="Changes to the assembly go to the designer",
        text=(
            "Adding or moving channel, changing stud gauge or spacing, board type, layers or "
            "blocking can change both the fire and the sound rating. Raise it with the architect "
            "or engineer of record; do not close it here as a site fix."
        ),
        basis=(
            "A fire-resistance listing does not define the STC, nor the reverse "
            "(common practice, no source); IBC §708 fire partitions."
        ),
    ),
    Caution(
        key="site_safety",
        title="Site safety first",
        text=(
            "Follow site sign-in, escort and PPE rules (hard hat, eye protection, hi-vis, "
            "safety footwear, gloves). Watch for floor holes, shafts, open edges and stairs "
            "without rails. Do not use the phone on ladders, stairs or near openings; "
            "work is saved offline, so there is no need to walk to find signal."
        ),
        basis="29 CFR 1926.100, 1926.501(b)(1), 1926.502(i) (OSHA Construction Industry Digest, 2014).",
    ),
    Caution(
        key="estimates_not_tests",
        title="Estimates, not field tests",
        text=(
            "Ratings here are laboratory-type estimates from the recorded gaps. They are not a "
            "field test and do not replace testing to ASTM E336 or ISO 16283-1, nor design and "
            "review by a licensed acoustical consultant or fire protection engineer."
        ),
        basis="ASTM E90 §5.2 (laboratory TL is an upper bound); ASTM E336; ISO 16283-1:2014+A1:2017.",
    ),
    Caution(
        key="local_codes_ahj",
        title="Local codes and the AHJ govern",
        text=(
            "The code edition and amendments adopted where the building stands govern, and the "
            "project specification may ask for more. This job shows the rule set it uses; "
            "confirm it with the authority having jurisdiction (AHJ)."
        ),
        basis="Adoption of IBC, NBC, Approved Document E and their amendments varies by jurisdiction.",
    ),
    Caution(
        key="records",
        title="What 'closed' means",
        text=(
            "A closed item was verified fixed by the inspector. It does not mean code compliant "
            "or certified. Entries are kept with who and when, and are never silently edited; "
            "photos may show people or property, so follow the project's privacy rules."
        ),
        basis="Common practice, no source.",
    ),
)

#: Every caution by key.
CAUTIONS: dict[str, Caution] = {c.key: c for c in _ALL}

#: Keys shown, in this order, on every audit, report and fix-first page.
GENERAL_CAUTIONS: tuple[str, ...] = (
    "estimates_not_tests",
    "sealant_not_firestop",
    "local_codes_ahj",
    "records",
)


def cautions_for(keys: Iterable[str]) -> list[Caution]:
    """Return the cautions for ``keys``, in first-seen order, without repeats.

    Parameters
    ----------
    keys : iterable of str
        Caution keys, e.g. the ``caution`` of each seal point on a wall. Empty
        strings (seal points with no caution) are skipped.

    Returns
    -------
    list of Caution

    Raises
    ------
    ValueError
        If a key is not in :data:`CAUTIONS`; the message names the key.
    """
    if isinstance(keys, str):
        # A bare string would iterate by character; treat it as one key.
        keys = (keys,)
    seen: dict[str, Caution] = {}
    for key in keys:
        if not key or key in seen:
            continue
        try:
            seen[key] = CAUTIONS[key]
        except KeyError:
            known = ", ".join(CAUTIONS)
            raise ValueError(f"caution key {key!r} is not known; known keys: {known}") from None
    return list(seen.values())
