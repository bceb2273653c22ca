-- Rows every installation needs: roles, reliability grades and the controlled list of materials.
INSERT INTO roles (name, description) VALUES
  ('contributor', 'Submits determinations by form or spreadsheet and answers reviewers'' questions'),
  ('reviewer', 'Grades the reliability of determinations and flags problems'),
  ('modeller', 'Builds and downloads constraint sets, uses API tokens, scores model runs'),
  ('editor', 'Invites people, assigns roles, manages curves, publishes releases, reads the audit log');
--> statement-breakpoint
INSERT INTO grades (value, name, description) VALUES
  (3, 'secure', 'Reliable material and context; use with confidence'),
  (2, 'usable', 'Minor caveats; usable with its stated uncertainty'),
  (1, 'doubtful', 'Serious caveats; use only with corroboration'),
  (0, 'rejected', 'Not a valid constraint');
--> statement-breakpoint
INSERT INTO materials (name, methods, marine) VALUES
  ('marine shell', 'radiocarbon', 1),
  ('foraminifera', 'radiocarbon', 1),
  ('whale bone', 'radiocarbon', 1),
  ('seaweed', 'radiocarbon', 1),
  ('plant macrofossil', 'radiocarbon', 0),
  ('wood', 'radiocarbon', 0),
  ('peat', 'radiocarbon', 0),
  ('gyttja', 'radiocarbon', 0),
  ('bulk sediment', 'radiocarbon', 0),
  ('bone', 'radiocarbon', 0),
  ('charcoal', 'radiocarbon', 0),
  ('freshwater shell', 'radiocarbon', 0),
  ('moss', 'radiocarbon', 0),
  ('quartz', 'luminescence', 0),
  ('K-feldspar', 'luminescence', 0),
  ('polymineral', 'luminescence', 0),
  ('boulder quartz', 'exposure', 0),
  ('bedrock quartz', 'exposure', 0);
