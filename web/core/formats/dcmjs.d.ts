// Types for the parts of "dcmjs" (DICOM Part 10 writing) that dicom-write.ts uses.
declare module 'dcmjs' {
  type Dataset = Record<string, unknown>;
  class DicomDict {
    constructor(meta: Dataset);
    dict: Dataset;
    write(options?: { allowInvalidVRLength?: boolean }): ArrayBuffer;
  }
  const dcmjs: {
    data: {
      DicomDict: typeof DicomDict;
      DicomMetaDictionary: { denaturalizeDataset(dataset: Dataset): Dataset };
    };
    log: { setLevel(level: string): void };
  };
  export default dcmjs;
}
