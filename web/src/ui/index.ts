/** The design system: import pages' building blocks from here. */
export * from './Button.js';
export * from './CitationBlock.js';
export * from './CopyButton.js';
export * from './Count.js';
export * from './EmptyState.js';
export * from './ErrorPanel.js';
export * from './FileSize.js';
export * from './Field.js';
export * from './formErrors.js';
export * from './Notice.js';
export * from './PageFrame.js';
export * from './ProgressBar.js';
export * from './Section.js';
export * from './Skeleton.js';
export * from './SortableTable.js';
export * from './StatusBadge.js';
export * from './Thumbnail.js';
