namespace Tieflow.OpcUa.Server;

/// <summary>NodeClass values (OPC 10000-3 §8.29) of the nodes our server holds; the numbers are those of the wire.</summary>
internal enum ServerNodeClass
{
    Unspecified = 0,
    Object = 1,
    Variable = 2,
    Method = 4,
    ObjectType = 8,
    VariableType = 16,
    ReferenceType = 32,
    DataType = 64,
    View = 128,
}
