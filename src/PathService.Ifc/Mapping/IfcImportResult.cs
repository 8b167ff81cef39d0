using PathService.Contracts.V1;

namespace PathService.Ifc.Mapping;

/// <summary>
/// The structure and loads read from an IFC file, in the requested labels, with every finding of the mapping
/// (severity ERROR: the model is incomplete and should not be analysed as is; WARNING: something was ignored or
/// assumed) and a note of the unit conversion applied.
/// </summary>
public sealed record IfcImportResult(
    StructureModel Model,
    LoadCase LoadCase,
    IReadOnlyList<Finding> Findings,
    string UnitsNote,
    string Schema);
