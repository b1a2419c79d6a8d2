-- A converter's bench runs (readings and reports, about three quarters of its document) move out
-- of the document into their own column, read only when the page renders its revision panels
-- afresh or the API and compare page show them. Documents stored before are built again on their
-- next read (DOC_SHAPE 2).
ALTER TABLE "converter_detail" ADD COLUMN "runs" json;