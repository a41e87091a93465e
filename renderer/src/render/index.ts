/** Rendering library: layers → palette indices → IIIF level-0 pyramids of palette PNGs. */
export { RenderInputError, isRenderInputError } from './errors.js';
export { planeOf, backgroundFromLattice, type RenderInput, type Plane, type CellWindow, type BackgroundSource, type BackgroundReader } from './plane.js';
export { computeStats } from './stats.js';
export { layerIndices, layerScale, indexHistogram, type LayerScale } from './layers.js';
export { tiePriority, mode4, reduce2x2, reduce2x2Into } from './reduce.js';
export { planPyramid, defaultPixelsPerCell, tileRequest, tileAliases, allTiles, tileCount, infoJson, fullImagePath, TILE_SIZE, type PyramidPlan, type PyramidLevel, type TileRequest, type IiifInfo } from './plan.js';
export { walkPyramid, type TileVisitor } from './walk.js';
export { encodeIndexedPng, decodePngRgba, packColourTable } from './encode.js';
export { type TileSink } from './sink.js';
export { createFolderSink } from './folder-sink.js';
export { createS3Sink, createS3Client, type S3Settings } from './s3-sink.js';
export { viewPrefix, iiifPrefix, legendKeyOf, previewKeyOf } from './keys.js';
export { renderPyramid, renderPreview, PREVIEW_MAX_SIDE, type PyramidOptions, type PyramidResult, type ViewOptions } from './pyramid.js';
