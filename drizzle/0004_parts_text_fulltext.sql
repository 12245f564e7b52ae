-- Text search of the catalogue list (catalogue/list.ts): a FULLTEXT prefilter over SKU, name and
-- supplier part number. Written by hand: drizzle-kit does not model FULLTEXT indexes.
ALTER TABLE `parts` ADD FULLTEXT INDEX `parts_text_ft` (`sku`, `name`, `supplier_part_number`);
