/**
 * Marks formula cells of an .xlsx file as dynamic-array formulas, so Excel lets
 * them spill instead of reading them as old single-cell formulas (which it
 * would show with an implicit-intersection "@" and cut to one value).
 *
 * exceljs writes plain `<f>` formulas only. A dynamic-array formula is stored
 * as an array formula whose cell (attribute cm) points at a cell-metadata
 * record of type XLDAPR carrying `dynamicArrayProperties fDynamic="1"`: the
 * metadata part of ECMA-376 Part 1 (§18.9) with the dynamic-array extension
 * Microsoft documents in [MS-XLSX]. This adds that part and flags the cells.
 *
 * jszip is the zip library exceljs itself uses (a dependency of exceljs).
 */
import JSZip from "jszip";

const METADATA_PATH = "xl/metadata.xml";
const METADATA_CONTENT_TYPE = "application/vnd.openxmlformats-officedocument.spreadsheetml.sheetMetadata+xml";
const METADATA_RELATIONSHIP = "http://schemas.openxmlformats.org/officeDocument/2006/relationships/sheetMetadata";

const METADATA_XML =
  `<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n` +
  `<metadata xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main" xmlns:xda="http://schemas.microsoft.com/office/spreadsheetml/2017/dynamicarray">` +
  `<metadataTypes count="1"><metadataType name="XLDAPR" minSupportedVersion="120000" copy="1" pasteAll="1" pasteValues="1" merge="1" splitFirst="1" rowColShift="1" clearFormats="1" clearComments="1" assign="1" coerce="1" cellMeta="1"/></metadataTypes>` +
  `<futureMetadata name="XLDAPR" count="1"><bk><extLst><ext uri="{bdbb8cdc-fa1e-496e-a857-3c3f30c029c3}"><xda:dynamicArrayProperties fDynamic="1" fCollapsed="0"/></ext></extLst></bk></futureMetadata>` +
  `<cellMetadata count="1"><bk><rc t="1" v="0"/></bk></cellMetadata>` +
  `</metadata>`;

/**
 * Returns a copy of the workbook in which every formula cell of the sheet at
 * `sheetPath` (such as "xl/worksheets/sheet2.xml") whose text starts with one
 * of `functionPrefixes` is a dynamic-array formula anchored at its cell.
 */
export async function markDynamicArrays(workbook: Buffer, sheetPath: string, functionPrefixes: readonly string[]): Promise<Buffer> {
  const zip = await JSZip.loadAsync(workbook);
  const sheetFile = zip.file(sheetPath);
  if (!sheetFile) throw new Error(`The workbook has no part ${sheetPath}.`);
  let marked = 0;
  const sheetXml = (await sheetFile.async("string")).replace(
    /<c r="([A-Z]+\d+)"([^>]*)><f>([^<]*)<\/f>/g,
    (whole, address: string, attributes: string, formula: string) => {
      if (!functionPrefixes.some((prefix) => formula.startsWith(prefix))) return whole;
      marked++;
      return `<c r="${address}"${attributes} cm="1"><f t="array" ref="${address}">${formula}</f>`;
    },
  );
  if (marked === 0) throw new Error(`No formula in ${sheetPath} starts with ${functionPrefixes.join(" or ")}.`);
  zip.file(sheetPath, sheetXml);

  zip.file(METADATA_PATH, METADATA_XML);
  const typesFile = zip.file("[Content_Types].xml");
  const relsFile = zip.file("xl/_rels/workbook.xml.rels");
  if (!typesFile || !relsFile) throw new Error("The workbook lacks its content types or workbook relationships.");
  const types = await typesFile.async("string");
  if (!types.includes(`/${METADATA_PATH}`)) {
    zip.file("[Content_Types].xml", types.replace("</Types>", `<Override PartName="/${METADATA_PATH}" ContentType="${METADATA_CONTENT_TYPE}"/></Types>`));
  }
  const rels = await relsFile.async("string");
  if (!rels.includes(METADATA_RELATIONSHIP)) {
    zip.file("xl/_rels/workbook.xml.rels", rels.replace("</Relationships>", `<Relationship Id="rIdSkeinMetadata" Type="${METADATA_RELATIONSHIP}" Target="metadata.xml"/></Relationships>`));
  }
  return zip.generateAsync({ type: "nodebuffer", compression: "DEFLATE" });
}
