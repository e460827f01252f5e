-- Cached figure renders no longer count toward a group's stored bytes (anyone may ask for a
-- public figure); the render cache is bounded by the plan instead. The counter loses the render
-- bytes it held.
UPDATE "groups" g SET "storage_bytes" = greatest(0, g."storage_bytes" - coalesce((
  SELECT sum(fr."byte_length") FROM "figure_renders" fr JOIN "figures" f ON f."id" = fr."figure_id" WHERE f."group_id" = g."id"
), 0));
