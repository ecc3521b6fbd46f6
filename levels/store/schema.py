"""Typed SQLAlchemy 2 models of the store.

Tables: species, samples, datasets, levels, lines, ionization_limits, audit_log.
Constraints live in the schema itself so no writer can bypass them: unique
state per dataset, ``two_j >= 0``, parity in {+1, -1}, finite energies (a CHECK
``-1e300 < x < 1e300`` rejects infinities; NaN is refused by NOT NULL on
SQLite, which stores NaN as NULL, and by the same CHECK on PostgreSQL, where
NaN compares greater than every number), foreign keys everywhere.

The schema is created and upgraded by the Alembic migrations in
``levels/store/migrations``; :data:`Base.metadata` is their source of truth.
"""

from __future__ import annotations

import datetime as dt
from typing import Optional

from sqlalchemy import (
    CheckConstraint,
    DateTime,
    Float,
    ForeignKey,
    Index,
    Integer,
    MetaData,
    String,
    Text,
    UniqueConstraint,
)
from sqlalchemy.orm import DeclarativeBase, Mapped, mapped_column, relationship

NAMING = {
    "ix": "ix_%(column_0_label)s",
    "uq": "uq_%(table_name)s_%(column_0_name)s",
    "ck": "ck_%(table_name)s_%(constraint_name)s",
    "fk": "fk_%(table_name)s_%(column_0_name)s_%(referred_table_name)s",
    "pk": "pk_%(table_name)s",
}

FINITE_LIMIT = "1e300"
DATASET_KINDS = ("computed", "measured", "imported")
#: roles of the computed datasets the tool owns and rebuilds, one per (role, species):
#: a one-electron ion with fine structure / as nl terms, the lines implied by the stored
#: levels, a fitted series limit, computed rates of a many-electron species
COMPUTED_ROLES = ("hydrogenic", "hydrogenic-nl", "derived-lines", "series-limit", "rates")


def _finite(column: str, nullable: bool = False) -> str:
    test = f"{column} > -{FINITE_LIMIT} AND {column} < {FINITE_LIMIT}"
    return f"{column} IS NULL OR ({test})" if nullable else test


def utcnow() -> dt.datetime:
    """Timezone-aware current UTC time (stored by every created/at column)."""
    return dt.datetime.now(dt.UTC)


class Base(DeclarativeBase):
    """Declarative base with the project's constraint naming convention."""

    metadata = MetaData(naming_convention=NAMING)


class Species(Base):
    """An atom or ion of one isotope: (Z, charge, mass number)."""

    __tablename__ = "species"
    __table_args__ = (
        UniqueConstraint("z", "charge", "mass_number", name="uq_species_state"),
        CheckConstraint("z >= 1 AND z <= 118", name="z_range"),
        CheckConstraint("charge >= 0 AND charge < z", name="charge_range"),
        CheckConstraint("mass_number >= z", name="mass_number_range"),
    )

    id: Mapped[int] = mapped_column(primary_key=True)
    z: Mapped[int] = mapped_column(Integer)
    charge: Mapped[int] = mapped_column(Integer)
    mass_number: Mapped[int] = mapped_column(Integer)
    name: Mapped[str] = mapped_column(String(32), index=True)

    levels: Mapped[list[Level]] = relationship(back_populates="species")


class Sample(Base):
    """A lab sample with its conditions (gas fill, pressure, discharge, instrument)."""

    __tablename__ = "samples"
    __table_args__ = (
        CheckConstraint(_finite("pressure_pa", True) + " AND (pressure_pa IS NULL OR pressure_pa >= 0)",
                        name="pressure"),
        CheckConstraint("te_k IS NULL OR (te_k > 0 AND te_k < 1e12)", name="te"),
        CheckConstraint("ne_m3 IS NULL OR (ne_m3 > 0 AND ne_m3 < 1e40)", name="ne"),
        CheckConstraint("tgas_k IS NULL OR (tgas_k > 0 AND tgas_k < 1e12)", name="tgas"),
        CheckConstraint("path_length_m IS NULL OR (path_length_m > 0 AND path_length_m < 1e6)", name="path"),
        CheckConstraint(_finite("current_a", True), name="current"),
    )

    id: Mapped[int] = mapped_column(primary_key=True)
    name: Mapped[str] = mapped_column(String(200), unique=True)
    description: Mapped[str] = mapped_column(Text, default="")
    gas_fill: Mapped[str] = mapped_column(String(200), default="")
    pressure_pa: Mapped[Optional[float]] = mapped_column(Float)
    current_a: Mapped[Optional[float]] = mapped_column(Float)
    instrument: Mapped[str] = mapped_column(String(200), default="")
    te_k: Mapped[Optional[float]] = mapped_column(Float)
    ne_m3: Mapped[Optional[float]] = mapped_column(Float)
    tgas_k: Mapped[Optional[float]] = mapped_column(Float)
    path_length_m: Mapped[Optional[float]] = mapped_column(Float)
    created_at: Mapped[dt.datetime] = mapped_column(DateTime(timezone=True), default=utcnow)

    datasets: Mapped[list[Dataset]] = relationship(back_populates="sample")


class Dataset(Base):
    """Where data came from: computed (method + version), measured or imported (citation)."""

    __tablename__ = "datasets"
    __table_args__ = (
        CheckConstraint("kind IN ('computed', 'measured', 'imported')", name="kind"),
        CheckConstraint("retracted IN (0, 1)", name="retracted_flag"),
        CheckConstraint("role IS NULL OR role IN (" + ", ".join(f"'{r}'" for r in COMPUTED_ROLES) + ")",
                        name="role_known"),
        CheckConstraint("role IS NULL OR (kind = 'computed' AND owner_species_id IS NOT NULL)", name="role_owner"),
        # one computed dataset per role and species (NULL roles, i.e. user data, never collide)
        Index("uq_datasets_role_owner", "role", "owner_species_id", unique=True),
    )

    id: Mapped[int] = mapped_column(primary_key=True)
    name: Mapped[str] = mapped_column(String(200), unique=True)
    kind: Mapped[str] = mapped_column(String(16))
    method: Mapped[str] = mapped_column(String(200), default="")
    method_version: Mapped[str] = mapped_column(String(64), default="")
    citation: Mapped[str] = mapped_column(Text, default="")
    author: Mapped[str] = mapped_column(String(200), default="")
    description: Mapped[str] = mapped_column(Text, default="")
    #: JSON text of method options (for a computed set: which corrections were applied)
    options_json: Mapped[str] = mapped_column(Text, default="{}")
    created_at: Mapped[dt.datetime] = mapped_column(DateTime(timezone=True), default=utcnow)
    sample_id: Mapped[Optional[int]] = mapped_column(ForeignKey("samples.id", ondelete="RESTRICT"))
    retracted: Mapped[int] = mapped_column(Integer, default=0)
    #: for a dataset the tool computes and rebuilds: its role (one of COMPUTED_ROLES) and the
    #: species it belongs to; NULL for user data, which no rebuild ever touches
    role: Mapped[Optional[str]] = mapped_column(String(32))
    owner_species_id: Mapped[Optional[int]] = mapped_column(ForeignKey("species.id", ondelete="RESTRICT"))
    #: for an imported file: SHA-256 of its content (header and rows as read), so the same file is
    #: recognised when it is imported again; NULL for data that did not come from one file
    content_sha256: Mapped[Optional[str]] = mapped_column(String(64))

    sample: Mapped[Optional[Sample]] = relationship(back_populates="datasets")
    levels: Mapped[list[Level]] = relationship(back_populates="dataset")


class Level(Base):
    """A stationary state: energy above the species' ground level, cm-1."""

    __tablename__ = "levels"
    __table_args__ = (
        UniqueConstraint("dataset_id", "species_id", "configuration", "term", "two_j", name="uq_levels_state"),
        UniqueConstraint("dataset_id", "species_id", "label", name="uq_levels_label"),
        CheckConstraint("two_j IS NULL OR two_j >= 0", name="two_j_nonneg"),
        CheckConstraint("g >= 1 AND (two_j IS NULL OR g = two_j + 1)", name="g_matches_j"),
        CheckConstraint("parity IN (1, -1)", name="parity_sign"),
        CheckConstraint(_finite("energy_cm1"), name="energy_finite"),
        CheckConstraint(_finite("unc_cm1", True) + " AND (unc_cm1 IS NULL OR unc_cm1 >= 0)", name="unc_valid"),
        CheckConstraint("lifetime_s IS NULL OR (lifetime_s > 0)", name="lifetime_positive"),
        CheckConstraint(_finite("lande_g", True), name="lande_finite"),
        CheckConstraint("n IS NULL OR n >= 1", name="n_positive"),
        CheckConstraint("l IS NULL OR l >= 0", name="l_nonneg"),
        Index("ix_levels_species_energy", "species_id", "energy_cm1"),
        Index("ix_levels_dataset", "dataset_id"),
        Index("ix_levels_species_state", "species_id", "state_configuration", "term", "two_j"),
    )

    id: Mapped[int] = mapped_column(primary_key=True)
    dataset_id: Mapped[int] = mapped_column(ForeignKey("datasets.id", ondelete="CASCADE"))
    species_id: Mapped[int] = mapped_column(ForeignKey("species.id", ondelete="RESTRICT"))
    label: Mapped[str] = mapped_column(String(200))
    configuration: Mapped[str] = mapped_column(String(200))
    #: the canonical configuration (``levels.notation.canonical_configuration``: the closed core written
    #: out, bracketed or left out gives one text), for recognising a state across datasets; ``configuration``
    #: keeps the form the data gave. NULL (rows written before migration 0004 that did not parse, and
    #: computed rows) means the same as ``configuration``
    state_configuration: Mapped[Optional[str]] = mapped_column(String(200))
    term: Mapped[str] = mapped_column(String(32), default="")
    #: 2J; NULL for a term whose J components are not resolved (then ``g`` is the term's weight)
    two_j: Mapped[Optional[int]] = mapped_column(Integer)
    #: statistical weight: 2J + 1 for a level, (2S+1)(2L+1) for an unresolved term
    g: Mapped[int] = mapped_column(Integer)
    parity: Mapped[int] = mapped_column(Integer)
    energy_cm1: Mapped[float] = mapped_column(Float)
    unc_cm1: Mapped[Optional[float]] = mapped_column(Float)
    #: multiplicity 2S+1 and L of the LS term, when there is one
    multiplicity: Mapped[Optional[int]] = mapped_column(Integer)
    big_l: Mapped[Optional[int]] = mapped_column(Integer)
    #: principal quantum number and l of the outer (running) electron
    n: Mapped[Optional[int]] = mapped_column(Integer)
    l: Mapped[Optional[int]] = mapped_column(Integer)
    lifetime_s: Mapped[Optional[float]] = mapped_column(Float)
    lande_g: Mapped[Optional[float]] = mapped_column(Float)

    dataset: Mapped[Dataset] = relationship(back_populates="levels")
    species: Mapped[Species] = relationship(back_populates="levels")


class Line(Base):
    """A transition between two stored levels of one species."""

    __tablename__ = "lines"
    __table_args__ = (
        UniqueConstraint("dataset_id", "lower_id", "upper_id", "multipole", name="uq_lines_pair"),
        CheckConstraint("multipole IN ('E1', 'M1', 'E2', 'M2', 'E3', '2E1', '')", name="multipole_code"),
        CheckConstraint("lower_id <> upper_id", name="distinct_levels"),
        CheckConstraint(_finite("wavenumber_cm1") + " AND wavenumber_cm1 > 0", name="wavenumber_positive"),
        CheckConstraint(_finite("vacuum_nm") + " AND vacuum_nm > 0", name="vacuum_positive"),
        CheckConstraint("air_nm IS NULL OR (air_nm > 0 AND air_nm < 1e300)", name="air_positive"),
        CheckConstraint("a_per_s IS NULL OR (a_per_s >= 0 AND a_per_s < 1e300)", name="a_valid"),
        CheckConstraint("f_abs IS NULL OR (f_abs >= 0 AND f_abs < 1e300)", name="f_valid"),
        CheckConstraint("line_strength_au IS NULL OR (line_strength_au >= 0 AND line_strength_au < 1e300)",
                        name="s_valid"),
        CheckConstraint("unc_nm IS NULL OR (unc_nm >= 0 AND unc_nm < 1e300)", name="unc_valid"),
        CheckConstraint("observed_nm IS NULL OR (observed_nm > 0 AND observed_nm < 1e300)", name="observed_positive"),
        CheckConstraint("medium IN ('air', 'vacuum', '')", name="medium_name"),
        CheckConstraint(_finite("intensity", True), name="intensity_finite"),
        Index("ix_lines_species_vacuum", "species_id", "vacuum_nm"),
        Index("ix_lines_vacuum", "vacuum_nm"),
        Index("ix_lines_dataset", "dataset_id"),
        Index("ix_lines_upper", "upper_id"),
        Index("ix_lines_lower", "lower_id"),
    )

    id: Mapped[int] = mapped_column(primary_key=True)
    dataset_id: Mapped[int] = mapped_column(ForeignKey("datasets.id", ondelete="CASCADE"))
    species_id: Mapped[int] = mapped_column(ForeignKey("species.id", ondelete="RESTRICT"))
    lower_id: Mapped[int] = mapped_column(ForeignKey("levels.id", ondelete="CASCADE"))
    upper_id: Mapped[int] = mapped_column(ForeignKey("levels.id", ondelete="CASCADE"))
    multipole: Mapped[str] = mapped_column(String(4), default="E1")
    wavenumber_cm1: Mapped[float] = mapped_column(Float)
    vacuum_nm: Mapped[float] = mapped_column(Float)
    air_nm: Mapped[Optional[float]] = mapped_column(Float)
    a_per_s: Mapped[Optional[float]] = mapped_column(Float)
    f_abs: Mapped[Optional[float]] = mapped_column(Float)
    line_strength_au: Mapped[Optional[float]] = mapped_column(Float)
    unc_nm: Mapped[Optional[float]] = mapped_column(Float)
    #: for measured lines: the wavelength as observed, its medium, intensity and a note
    observed_nm: Mapped[Optional[float]] = mapped_column(Float)
    medium: Mapped[str] = mapped_column(String(8), default="")
    intensity: Mapped[Optional[float]] = mapped_column(Float)
    note: Mapped[str] = mapped_column(Text, default="")

    lower: Mapped[Level] = relationship(foreign_keys=[lower_id])
    upper: Mapped[Level] = relationship(foreign_keys=[upper_id])


class IonizationLimit(Base):
    """An ionization energy (series limit) of a species given by a dataset, cm-1."""

    __tablename__ = "ionization_limits"
    __table_args__ = (
        UniqueConstraint("dataset_id", "species_id", name="uq_ionization_limits_dataset_species"),
        CheckConstraint(_finite("energy_cm1") + " AND energy_cm1 > 0", name="energy_positive"),
        CheckConstraint("unc_cm1 IS NULL OR (unc_cm1 >= 0 AND unc_cm1 < 1e300)", name="unc_valid"),
    )

    id: Mapped[int] = mapped_column(primary_key=True)
    dataset_id: Mapped[int] = mapped_column(ForeignKey("datasets.id", ondelete="CASCADE"))
    species_id: Mapped[int] = mapped_column(ForeignKey("species.id", ondelete="RESTRICT"))
    energy_cm1: Mapped[float] = mapped_column(Float)
    unc_cm1: Mapped[Optional[float]] = mapped_column(Float)
    method: Mapped[str] = mapped_column(String(200), default="")


class AuditEntry(Base):
    """One write to the store: who, when, what."""

    __tablename__ = "audit_log"

    id: Mapped[int] = mapped_column(primary_key=True)
    at: Mapped[dt.datetime] = mapped_column(DateTime(timezone=True), default=utcnow)
    actor: Mapped[str] = mapped_column(String(200))
    action: Mapped[str] = mapped_column(String(64))
    target: Mapped[str] = mapped_column(String(400), default="")
    detail_json: Mapped[str] = mapped_column(Text, default="{}")


#: tables in dependency order (parents first), used by dumps and store export
TABLE_ORDER = ("species", "samples", "datasets", "levels", "lines", "ionization_limits", "audit_log")
