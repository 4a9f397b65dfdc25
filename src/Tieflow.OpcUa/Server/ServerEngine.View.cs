using System.Security.Cryptography;
using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Server;

/// <content>View and attribute services: Browse, BrowseNext, TranslateBrowsePathsToNodeIds, Read (OPC 10000-4 §5.8, §5.10).</content>
internal sealed partial class ServerEngine
{
    // Status codes the generated table lacks (values of StatusCode.csv, from memory).
    private static readonly StatusCode BadReferenceTypeIdInvalid = new(0x804C0000u);
    private static readonly StatusCode BadBrowseDirectionInvalid = new(0x804D0000u);
    private static readonly StatusCode BadViewIdUnknown = new(0x806B0000u);
    private static readonly StatusCode BadTimestampsToReturnInvalid = new(0x802B0000u);
    private static readonly StatusCode BadMaxAgeInvalid = new(0x80700000u);
    private static readonly StatusCode BadDataEncodingUnsupported = new(0x80390000u);

    private BrowseResponse Browse(ServerSession session, BrowseRequest request)
    {
        if (!request.View.ViewId.IsNull)
        {
            throw new ServiceResultException(BadViewIdUnknown, $"view {request.View.ViewId} does not exist");
        }
        CheckOperationCount(request.NodesToBrowse.Length);
        var results = new BrowseResult[request.NodesToBrowse.Length];
        for (var i = 0; i < results.Length; i++)
        {
            results[i] = BrowseOne(session, request.NodesToBrowse[i], request.RequestedMaxReferencesPerNode);
        }
        return new BrowseResponse { ResponseHeader = Header(request), Results = results, DiagnosticInfos = [] };
    }

    private BrowseResult BrowseOne(ServerSession session, BrowseDescription description, uint maxReferences)
    {
        if (!AddressSpace.TryGet(description.NodeId, out var node))
        {
            return new BrowseResult { StatusCode = StatusCodes.BadNodeIdUnknown };
        }
        if ((int)description.BrowseDirection is < 0 or > 2)
        {
            return new BrowseResult { StatusCode = BadBrowseDirectionInvalid };
        }
        if (!AddressSpace.IsKnownReferenceType(description.ReferenceTypeId))
        {
            return new BrowseResult { StatusCode = BadReferenceTypeIdInvalid };
        }
        var references = AddressSpace.Browse(node, (int)description.BrowseDirection, description.ReferenceTypeId,
            description.IncludeSubtypes, description.NodeClassMask);
        return Page(session, references, description.ResultMask, maxReferences);
    }

    private BrowseResult Page(ServerSession session, List<BrowseReference> references, uint resultMask, uint maxReferences)
    {
        if (maxReferences == 0 || references.Count <= maxReferences)
        {
            return new BrowseResult { StatusCode = StatusCodes.Good, References = [.. references.Select(r => Describe(r, resultMask))] };
        }
        if (session.ContinuationPoints.Count >= Settings.MaxContinuationPointsPerSession)
        {
            return new BrowseResult { StatusCode = StatusCodes.BadNoContinuationPoints };
        }
        var page = references.GetRange(0, (int)maxReferences);
        var rest = references.GetRange((int)maxReferences, references.Count - (int)maxReferences);
        var point = RandomNumberGenerator.GetBytes(16);
        session.ContinuationPoints[Convert.ToHexString(point)] = new BrowseContinuation(rest, resultMask, maxReferences);
        return new BrowseResult
        {
            StatusCode = StatusCodes.Good,
            ContinuationPoint = point,
            References = [.. page.Select(r => Describe(r, resultMask))],
        };
    }

    private BrowseNextResponse BrowseNext(ServerSession session, BrowseNextRequest request)
    {
        CheckOperationCount(request.ContinuationPoints.Length);
        var results = new BrowseResult[request.ContinuationPoints.Length];
        for (var i = 0; i < results.Length; i++)
        {
            var key = request.ContinuationPoints[i] is { } bytes ? Convert.ToHexString(bytes) : string.Empty;
            if (!session.ContinuationPoints.Remove(key, out var continuation))
            {
                results[i] = new BrowseResult { StatusCode = StatusCodes.BadContinuationPointInvalid };
                continue;
            }
            results[i] = request.ReleaseContinuationPoints
                ? new BrowseResult { StatusCode = StatusCodes.Good }
                : Page(session, continuation.Remaining, continuation.ResultMask, continuation.MaxReferences);
        }
        return new BrowseNextResponse { ResponseHeader = Header(request), Results = results, DiagnosticInfos = [] };
    }

    private static ReferenceDescription Describe(BrowseReference reference, uint resultMask) => new()
    {
        // The result mask bits (OPC 10000-4 §5.8.2.2): ReferenceType 1, IsForward 2, NodeClass 4, BrowseName 8,
        // DisplayName 16, TypeDefinition 32. The target NodeId is always returned.
        ReferenceTypeId = (resultMask & 1) != 0 ? reference.ReferenceTypeId : NodeId.Null,
        IsForward = (resultMask & 2) != 0 && reference.IsForward,
        NodeId = reference.Target,
        NodeClass = (resultMask & 4) != 0 ? (NodeClass)(int)reference.NodeClass : NodeClass.Unspecified,
        BrowseName = (resultMask & 8) != 0 ? reference.BrowseName : default,
        DisplayName = (resultMask & 16) != 0 ? reference.DisplayName : default,
        TypeDefinition = (resultMask & 32) != 0 ? reference.TypeDefinition : NodeId.Null,
    };

    private TranslateBrowsePathsToNodeIdsResponse Translate(TranslateBrowsePathsToNodeIdsRequest request)
    {
        CheckOperationCount(request.BrowsePaths.Length);
        var results = new BrowsePathResult[request.BrowsePaths.Length];
        for (var i = 0; i < results.Length; i++)
        {
            results[i] = TranslateOne(request.BrowsePaths[i]);
        }
        return new TranslateBrowsePathsToNodeIdsResponse { ResponseHeader = Header(request), Results = results, DiagnosticInfos = [] };
    }

    private BrowsePathResult TranslateOne(BrowsePath path)
    {
        if (!AddressSpace.TryGet(path.StartingNode, out _))
        {
            return new BrowsePathResult { StatusCode = StatusCodes.BadNodeIdUnknown };
        }
        var elements = path.RelativePath.Elements;
        if (elements.Length == 0)
        {
            return new BrowsePathResult { StatusCode = StatusCodes.BadNothingToDo };
        }
        var current = new List<NodeId> { path.StartingNode };
        foreach (var element in elements)
        {
            if (string.IsNullOrEmpty(element.TargetName.Name))
            {
                return new BrowsePathResult { StatusCode = StatusCodes.BadBrowseNameInvalid };
            }
            var next = new List<NodeId>();
            foreach (var source in current)
            {
                foreach (var target in AddressSpace.Follow(source, element.ReferenceTypeId, element.IsInverse, element.IncludeSubtypes, element.TargetName))
                {
                    if (!next.Contains(target))
                    {
                        next.Add(target);
                    }
                }
            }
            if (next.Count == 0)
            {
                return new BrowsePathResult { StatusCode = StatusCodes.BadNoMatch };
            }
            current = next;
        }
        return new BrowsePathResult
        {
            StatusCode = StatusCodes.Good,
            Targets = [.. current.Select(n => new BrowsePathTarget { TargetId = n, RemainingPathIndex = uint.MaxValue })],
        };
    }

    private ReadResponse Read(ReadRequest request)
    {
        if (request.MaxAge < 0 || double.IsNaN(request.MaxAge))
        {
            throw new ServiceResultException(BadMaxAgeInvalid, $"maxAge {request.MaxAge} is negative");
        }
        if ((int)request.TimestampsToReturn is < 0 or > 3)
        {
            throw new ServiceResultException(BadTimestampsToReturnInvalid, $"timestampsToReturn {(int)request.TimestampsToReturn} is not 0-3");
        }
        CheckOperationCount(request.NodesToRead.Length);
        var now = Now;
        var results = new DataValue[request.NodesToRead.Length];
        for (var i = 0; i < results.Length; i++)
        {
            var item = request.NodesToRead[i];
            if (!AddressSpace.TryGet(item.NodeId, out var node))
            {
                results[i] = new DataValue { Status = StatusCodes.BadNodeIdUnknown };
                continue;
            }
            if (item.IndexRange is not null)
            {
                results[i] = new DataValue { Status = StatusCodes.BadIndexRangeInvalid };
                continue;
            }
            if (!string.IsNullOrEmpty(item.DataEncoding.Name) && item.DataEncoding.Name != "Default Binary")
            {
                results[i] = new DataValue { Status = BadDataEncodingUnsupported };
                continue;
            }
            var value = NodeAttributes.Read(node, item.AttributeId);
            results[i] = value.Status.IsBad && value.Value.IsNull && item.AttributeId != NodeAttributes.Value
                ? value
                : NodeAttributes.WithTimestamps(value, (int)request.TimestampsToReturn, now, item.AttributeId == NodeAttributes.Value);
        }
        return new ReadResponse { ResponseHeader = Header(request), Results = results, DiagnosticInfos = [] };
    }
}
