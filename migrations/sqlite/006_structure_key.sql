-- +goose Up
-- monomers remember the canonical key of their structure (duplicates are reported); saved
-- results remember the monomer version and SMILES they were computed for.
ALTER TABLE monomers ADD COLUMN structure_key TEXT NOT NULL DEFAULT '';
CREATE INDEX monomers_structure_key ON monomers (structure_key);
ALTER TABLE results ADD COLUMN monomer_version INTEGER NOT NULL DEFAULT 0;
ALTER TABLE results ADD COLUMN monomer_smiles TEXT NOT NULL DEFAULT '';

-- +goose Down
DROP INDEX monomers_structure_key;
ALTER TABLE monomers DROP COLUMN structure_key;
ALTER TABLE results DROP COLUMN monomer_version;
ALTER TABLE results DROP COLUMN monomer_smiles;
