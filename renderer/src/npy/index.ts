/** NumPy .npy read/write: bytes in, typed arrays out. No file system access here. */
export { NpyFormatError } from './errors.js';
export { readNpy, NPY_MAGIC, type NpyArray, type NpyReadOptions, type NpyReadResult } from './read.js';
export { encodeNpy, writeNpy, npyHeader, type NpyWriteOptions } from './write.js';
export { dtypeOf, HOST_ENDIAN, INTEGER_DTYPES, FLOAT_DTYPES, type Endian, type NpyData, type NpyDtype, type IntegerDtype } from './dtype.js';
