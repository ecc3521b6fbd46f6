"""initial schema

Revision ID: 0001
Revises: 
Create Date: 2026-12-01 22:01:26.048525
"""

from alembic import op
import sqlalchemy as sa


revision = '0001'
down_revision = None
branch_labels = None
depends_on = None


def upgrade() -> None:
    op.create_table('audit_log',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('at', sa.DateTime(timezone=True), nullable=False),
    sa.Column('actor', sa.String(length=200), nullable=False),
    sa.Column('action', sa.String(length=64), nullable=False),
    sa.Column('target', sa.String(length=400), nullable=False),
    sa.Column('detail_json', sa.Text(), nullable=False),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_audit_log'))
    )
    op.create_table('samples',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('name', sa.String(length=200), nullable=False),
    sa.Column('description', sa.Text(), nullable=False),
    sa.Column('gas_fill', sa.String(length=200), nullable=False),
    sa.Column('pressure_pa', sa.Float(), nullable=True),
    sa.Column('current_a', sa.Float(), nullable=True),
    sa.Column('instrument', sa.String(length=200), nullable=False),
    sa.Column('te_k', sa.Float(), nullable=True),
    sa.Column('ne_m3', sa.Float(), nullable=True),
    sa.Column('tgas_k', sa.Float(), nullable=True),
    sa.Column('path_length_m', sa.Float(), nullable=True),
    sa.Column('created_at', sa.DateTime(timezone=True), nullable=False),
    sa.CheckConstraint('current_a IS NULL OR (current_a > -1e300 AND current_a < 1e300)', name=op.f('ck_samples_current')),
    sa.CheckConstraint('ne_m3 IS NULL OR (ne_m3 > 0 AND ne_m3 < 1e40)', name=op.f('ck_samples_ne')),
    sa.CheckConstraint('path_length_m IS NULL OR (path_length_m > 0 AND path_length_m < 1e6)', name=op.f('ck_samples_path')),
    sa.CheckConstraint('pressure_pa IS NULL OR (pressure_pa > -1e300 AND pressure_pa < 1e300) AND (pressure_pa IS NULL OR pressure_pa >= 0)', name=op.f('ck_samples_pressure')),
    sa.CheckConstraint('te_k IS NULL OR (te_k > 0 AND te_k < 1e12)', name=op.f('ck_samples_te')),
    sa.CheckConstraint('tgas_k IS NULL OR (tgas_k > 0 AND tgas_k < 1e12)', name=op.f('ck_samples_tgas')),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_samples')),
    sa.UniqueConstraint('name', name=op.f('uq_samples_name'))
    )
    op.create_table('species',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('z', sa.Integer(), nullable=False),
    sa.Column('charge', sa.Integer(), nullable=False),
    sa.Column('mass_number', sa.Integer(), nullable=False),
    sa.Column('name', sa.String(length=32), nullable=False),
    sa.CheckConstraint('charge >= 0 AND charge < z', name=op.f('ck_species_charge_range')),
    sa.CheckConstraint('mass_number >= z', name=op.f('ck_species_mass_number_range')),
    sa.CheckConstraint('z >= 1 AND z <= 118', name=op.f('ck_species_z_range')),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_species')),
    sa.UniqueConstraint('z', 'charge', 'mass_number', name='uq_species_state')
    )
    with op.batch_alter_table('species', schema=None) as batch_op:
        batch_op.create_index(batch_op.f('ix_species_name'), ['name'], unique=False)

    op.create_table('datasets',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('name', sa.String(length=200), nullable=False),
    sa.Column('kind', sa.String(length=16), nullable=False),
    sa.Column('method', sa.String(length=200), nullable=False),
    sa.Column('method_version', sa.String(length=64), nullable=False),
    sa.Column('citation', sa.Text(), nullable=False),
    sa.Column('author', sa.String(length=200), nullable=False),
    sa.Column('description', sa.Text(), nullable=False),
    sa.Column('options_json', sa.Text(), nullable=False),
    sa.Column('created_at', sa.DateTime(timezone=True), nullable=False),
    sa.Column('sample_id', sa.Integer(), nullable=True),
    sa.Column('retracted', sa.Integer(), nullable=False),
    sa.CheckConstraint("kind IN ('computed', 'measured', 'imported')", name=op.f('ck_datasets_kind')),
    sa.CheckConstraint('retracted IN (0, 1)', name=op.f('ck_datasets_retracted_flag')),
    sa.ForeignKeyConstraint(['sample_id'], ['samples.id'], name=op.f('fk_datasets_sample_id_samples'), ondelete='RESTRICT'),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_datasets')),
    sa.UniqueConstraint('name', name=op.f('uq_datasets_name'))
    )
    op.create_table('ionization_limits',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('dataset_id', sa.Integer(), nullable=False),
    sa.Column('species_id', sa.Integer(), nullable=False),
    sa.Column('energy_cm1', sa.Float(), nullable=False),
    sa.Column('unc_cm1', sa.Float(), nullable=True),
    sa.Column('method', sa.String(length=200), nullable=False),
    sa.CheckConstraint('energy_cm1 > -1e300 AND energy_cm1 < 1e300 AND energy_cm1 > 0', name=op.f('ck_ionization_limits_energy_positive')),
    sa.CheckConstraint('unc_cm1 IS NULL OR (unc_cm1 >= 0 AND unc_cm1 < 1e300)', name=op.f('ck_ionization_limits_unc_valid')),
    sa.ForeignKeyConstraint(['dataset_id'], ['datasets.id'], name=op.f('fk_ionization_limits_dataset_id_datasets'), ondelete='CASCADE'),
    sa.ForeignKeyConstraint(['species_id'], ['species.id'], name=op.f('fk_ionization_limits_species_id_species'), ondelete='RESTRICT'),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_ionization_limits')),
    sa.UniqueConstraint('dataset_id', 'species_id', name='uq_ionization_limits_dataset_species')
    )
    op.create_table('levels',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('dataset_id', sa.Integer(), nullable=False),
    sa.Column('species_id', sa.Integer(), nullable=False),
    sa.Column('label', sa.String(length=200), nullable=False),
    sa.Column('configuration', sa.String(length=200), nullable=False),
    sa.Column('term', sa.String(length=32), nullable=False),
    sa.Column('two_j', sa.Integer(), nullable=True),
    sa.Column('g', sa.Integer(), nullable=False),
    sa.Column('parity', sa.Integer(), nullable=False),
    sa.Column('energy_cm1', sa.Float(), nullable=False),
    sa.Column('unc_cm1', sa.Float(), nullable=True),
    sa.Column('multiplicity', sa.Integer(), nullable=True),
    sa.Column('big_l', sa.Integer(), nullable=True),
    sa.Column('n', sa.Integer(), nullable=True),
    sa.Column('l', sa.Integer(), nullable=True),
    sa.Column('lifetime_s', sa.Float(), nullable=True),
    sa.Column('lande_g', sa.Float(), nullable=True),
    sa.CheckConstraint('energy_cm1 > -1e300 AND energy_cm1 < 1e300', name=op.f('ck_levels_energy_finite')),
    sa.CheckConstraint('g >= 1 AND (two_j IS NULL OR g = two_j + 1)', name=op.f('ck_levels_g_matches_j')),
    sa.CheckConstraint('l IS NULL OR l >= 0', name=op.f('ck_levels_l_nonneg')),
    sa.CheckConstraint('lande_g IS NULL OR (lande_g > -1e300 AND lande_g < 1e300)', name=op.f('ck_levels_lande_finite')),
    sa.CheckConstraint('lifetime_s IS NULL OR (lifetime_s > 0)', name=op.f('ck_levels_lifetime_positive')),
    sa.CheckConstraint('n IS NULL OR n >= 1', name=op.f('ck_levels_n_positive')),
    sa.CheckConstraint('parity IN (1, -1)', name=op.f('ck_levels_parity_sign')),
    sa.CheckConstraint('two_j IS NULL OR two_j >= 0', name=op.f('ck_levels_two_j_nonneg')),
    sa.CheckConstraint('unc_cm1 IS NULL OR (unc_cm1 > -1e300 AND unc_cm1 < 1e300) AND (unc_cm1 IS NULL OR unc_cm1 >= 0)', name=op.f('ck_levels_unc_valid')),
    sa.ForeignKeyConstraint(['dataset_id'], ['datasets.id'], name=op.f('fk_levels_dataset_id_datasets'), ondelete='CASCADE'),
    sa.ForeignKeyConstraint(['species_id'], ['species.id'], name=op.f('fk_levels_species_id_species'), ondelete='RESTRICT'),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_levels')),
    sa.UniqueConstraint('dataset_id', 'species_id', 'configuration', 'term', 'two_j', name='uq_levels_state'),
    sa.UniqueConstraint('dataset_id', 'species_id', 'label', name='uq_levels_label')
    )
    with op.batch_alter_table('levels', schema=None) as batch_op:
        batch_op.create_index('ix_levels_dataset', ['dataset_id'], unique=False)
        batch_op.create_index('ix_levels_species_energy', ['species_id', 'energy_cm1'], unique=False)

    op.create_table('lines',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('dataset_id', sa.Integer(), nullable=False),
    sa.Column('species_id', sa.Integer(), nullable=False),
    sa.Column('lower_id', sa.Integer(), nullable=False),
    sa.Column('upper_id', sa.Integer(), nullable=False),
    sa.Column('multipole', sa.String(length=4), nullable=False),
    sa.Column('wavenumber_cm1', sa.Float(), nullable=False),
    sa.Column('vacuum_nm', sa.Float(), nullable=False),
    sa.Column('air_nm', sa.Float(), nullable=True),
    sa.Column('a_per_s', sa.Float(), nullable=True),
    sa.Column('f_abs', sa.Float(), nullable=True),
    sa.Column('line_strength_au', sa.Float(), nullable=True),
    sa.Column('unc_nm', sa.Float(), nullable=True),
    sa.Column('observed_nm', sa.Float(), nullable=True),
    sa.Column('medium', sa.String(length=8), nullable=False),
    sa.Column('intensity', sa.Float(), nullable=True),
    sa.Column('note', sa.Text(), nullable=False),
    sa.CheckConstraint("medium IN ('air', 'vacuum', '')", name=op.f('ck_lines_medium_name')),
    sa.CheckConstraint("multipole IN ('E1', 'M1', 'E2', 'M2', 'E3', '2E1', '')", name=op.f('ck_lines_multipole_code')),
    sa.CheckConstraint('a_per_s IS NULL OR (a_per_s >= 0 AND a_per_s < 1e300)', name=op.f('ck_lines_a_valid')),
    sa.CheckConstraint('air_nm IS NULL OR (air_nm > 0 AND air_nm < 1e300)', name=op.f('ck_lines_air_positive')),
    sa.CheckConstraint('f_abs IS NULL OR (f_abs >= 0 AND f_abs < 1e300)', name=op.f('ck_lines_f_valid')),
    sa.CheckConstraint('intensity IS NULL OR (intensity > -1e300 AND intensity < 1e300)', name=op.f('ck_lines_intensity_finite')),
    sa.CheckConstraint('line_strength_au IS NULL OR (line_strength_au >= 0 AND line_strength_au < 1e300)', name=op.f('ck_lines_s_valid')),
    sa.CheckConstraint('lower_id <> upper_id', name=op.f('ck_lines_distinct_levels')),
    sa.CheckConstraint('observed_nm IS NULL OR (observed_nm > 0 AND observed_nm < 1e300)', name=op.f('ck_lines_observed_positive')),
    sa.CheckConstraint('unc_nm IS NULL OR (unc_nm >= 0 AND unc_nm < 1e300)', name=op.f('ck_lines_unc_valid')),
    sa.CheckConstraint('vacuum_nm > -1e300 AND vacuum_nm < 1e300 AND vacuum_nm > 0', name=op.f('ck_lines_vacuum_positive')),
    sa.CheckConstraint('wavenumber_cm1 > -1e300 AND wavenumber_cm1 < 1e300 AND wavenumber_cm1 > 0', name=op.f('ck_lines_wavenumber_positive')),
    sa.ForeignKeyConstraint(['dataset_id'], ['datasets.id'], name=op.f('fk_lines_dataset_id_datasets'), ondelete='CASCADE'),
    sa.ForeignKeyConstraint(['lower_id'], ['levels.id'], name=op.f('fk_lines_lower_id_levels'), ondelete='CASCADE'),
    sa.ForeignKeyConstraint(['species_id'], ['species.id'], name=op.f('fk_lines_species_id_species'), ondelete='RESTRICT'),
    sa.ForeignKeyConstraint(['upper_id'], ['levels.id'], name=op.f('fk_lines_upper_id_levels'), ondelete='CASCADE'),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_lines')),
    sa.UniqueConstraint('dataset_id', 'lower_id', 'upper_id', 'multipole', name='uq_lines_pair')
    )
    with op.batch_alter_table('lines', schema=None) as batch_op:
        batch_op.create_index('ix_lines_dataset', ['dataset_id'], unique=False)
        batch_op.create_index('ix_lines_lower', ['lower_id'], unique=False)
        batch_op.create_index('ix_lines_species_vacuum', ['species_id', 'vacuum_nm'], unique=False)
        batch_op.create_index('ix_lines_upper', ['upper_id'], unique=False)
        batch_op.create_index('ix_lines_vacuum', ['vacuum_nm'], unique=False)



def downgrade() -> None:
    with op.batch_alter_table('lines', schema=None) as batch_op:
        batch_op.drop_index('ix_lines_vacuum')
        batch_op.drop_index('ix_lines_upper')
        batch_op.drop_index('ix_lines_species_vacuum')
        batch_op.drop_index('ix_lines_lower')
        batch_op.drop_index('ix_lines_dataset')

    op.drop_table('lines')
    with op.batch_alter_table('levels', schema=None) as batch_op:
        batch_op.drop_index('ix_levels_species_energy')
        batch_op.drop_index('ix_levels_dataset')

    op.drop_table('levels')
    op.drop_table('ionization_limits')
    op.drop_table('datasets')
    with op.batch_alter_table('species', schema=None) as batch_op:
        batch_op.drop_index(batch_op.f('ix_species_name'))

    op.drop_table('species')
    op.drop_table('samples')
    op.drop_table('audit_log')
