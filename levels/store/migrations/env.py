"""Alembic environment: runs the migrations on the connection handed in by levels.store.database."""

from alembic import context
from sqlalchemy import create_engine

from levels.store.schema import Base

config = context.config
target_metadata = Base.metadata


def run_migrations_online() -> None:
    connection = config.attributes.get("connection")
    if connection is None:
        engine = create_engine(config.get_main_option("sqlalchemy.url"))
        with engine.begin() as connection:
            _run(connection)
    else:
        _run(connection)


def _run(connection) -> None:
    context.configure(
        connection=connection,
        target_metadata=target_metadata,
        render_as_batch=connection.dialect.name == "sqlite",
    )
    with context.begin_transaction():
        context.run_migrations()


if context.is_offline_mode():
    raise SystemExit("levels migrations run online only (levels init)")
run_migrations_online()
