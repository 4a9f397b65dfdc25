#!/usr/bin/env python3
"""Generates the UA Binary structure and service message classes of Tieflow.OpcUa from the table below.

Field order and types follow OPC 10000-4 (Services) and OPC 10000-6 (Mappings); encoding ids are those of
<Type>_Encoding_DefaultBinary in namespace 0 (see docs/opcua.md §1.5). Run from this folder:
    python3 generate_messages.py
The generated .cs files are committed; edit this table, not them.
"""
import os

ENUMS = {
    # name: (doc, [(member, value, doc)])
    "MessageSecurityMode": ("Security mode of a secure channel or endpoint (OPC 10000-4 §7.20).", [
        ("Invalid", 0, "Not valid."), ("None", 1, "No security."), ("Sign", 2, "Messages are signed."),
        ("SignAndEncrypt", 3, "Messages are signed and encrypted.")]),
    "SecurityTokenRequestType": ("Whether an OpenSecureChannel request issues a new token or renews it.", [
        ("Issue", 0, "Create a new channel and its first token."), ("Renew", 1, "Renew the token of an open channel.")]),
    "ApplicationType": ("Kind of OPC UA application (OPC 10000-4 §7.2).", [
        ("Server", 0, "A server."), ("Client", 1, "A client."), ("ClientAndServer", 2, "Both."),
        ("DiscoveryServer", 3, "A discovery server.")]),
    "UserTokenType": ("Kind of user identity token (OPC 10000-4 §7.42).", [
        ("Anonymous", 0, "No user."), ("UserName", 1, "User name and password."), ("Certificate", 2, "X.509 certificate."),
        ("IssuedToken", 3, "A token issued by an authorization service.")]),
    "BrowseDirection": ("Direction of the references to follow when browsing.", [
        ("Forward", 0, "Forward references."), ("Inverse", 1, "Inverse references."), ("Both", 2, "Both directions.")]),
    "NodeClass": ("Class of a node (OPC 10000-3 §5.2); a bit mask when used as a browse filter.", [
        ("Unspecified", 0, "No class given."), ("Object", 1, "An object."), ("Variable", 2, "A variable."),
        ("Method", 4, "A method."), ("ObjectType", 8, "An object type."), ("VariableType", 16, "A variable type."),
        ("ReferenceType", 32, "A reference type."), ("DataType", 64, "A data type."), ("View", 128, "A view.")]),
    "TimestampsToReturn": ("Which timestamps a server returns with values.", [
        ("Source", 0, "Source timestamp only."), ("Server", 1, "Server timestamp only."), ("Both", 2, "Both timestamps."),
        ("Neither", 3, "No timestamps.")]),
    "MonitoringMode": ("Whether a monitored item samples and reports.", [
        ("Disabled", 0, "Neither samples nor reports."), ("Sampling", 1, "Samples but does not report."),
        ("Reporting", 2, "Samples and reports.")]),
    "DataChangeTrigger": ("What counts as a data change for a monitored item (OPC 10000-4 §7.22.2).", [
        ("Status", 0, "A change of status only."), ("StatusValue", 1, "A change of status or value (the default)."),
        ("StatusValueTimestamp", 2, "A change of status, value or source timestamp.")]),
    "DeadbandType": ("Kind of deadband of a DataChangeFilter.", [
        ("None", 0, "No deadband."), ("Absolute", 1, "Report when |last reported - new| exceeds the deadband value (engineering units)."),
        ("Percent", 2, "Deadband in percent of the node's EURange (only for analog items with an EURange).")]),
    "ServerState": ("State of a server (ServerStatus.State).", [
        ("Running", 0, "Running."), ("Failed", 1, "Failed."), ("NoConfiguration", 2, "Not configured."),
        ("Suspended", 3, "Suspended."), ("Shutdown", 4, "Shutting down."), ("Test", 5, "In test mode."),
        ("CommunicationFault", 6, "Communication fault."), ("Unknown", 7, "Unknown.")]),
}

# (name, encoding id or 0, kind, [(field, type)]) ; kind: "struct", "request", "response"
RH = ("RequestHeader", "struct:RequestHeader")
RS = ("ResponseHeader", "struct:ResponseHeader")
DI = ("DiagnosticInfos", "DiagnosticInfo[]")
TYPES = [
    ("RequestHeader", 391, "struct", [("AuthenticationToken", "NodeId"), ("Timestamp", "DateTime"), ("RequestHandle", "UInt32"),
        ("ReturnDiagnostics", "UInt32"), ("AuditEntryId", "String"), ("TimeoutHint", "UInt32"), ("AdditionalHeader", "ExtensionObject")]),
    ("ResponseHeader", 394, "struct", [("Timestamp", "DateTime"), ("RequestHandle", "UInt32"), ("ServiceResult", "StatusCode"),
        ("ServiceDiagnostics", "DiagnosticInfo"), ("StringTable", "String[]"), ("AdditionalHeader", "ExtensionObject")]),
    ("ServiceFault", 397, "response", [RS]),
    # Secure channel
    ("ChannelSecurityToken", 443, "struct", [("ChannelId", "UInt32"), ("TokenId", "UInt32"), ("CreatedAt", "DateTime"), ("RevisedLifetime", "UInt32")]),
    ("OpenSecureChannelRequest", 446, "request", [RH, ("ClientProtocolVersion", "UInt32"), ("RequestType", "enum:SecurityTokenRequestType"),
        ("SecurityMode", "enum:MessageSecurityMode"), ("ClientNonce", "ByteString"), ("RequestedLifetime", "UInt32")]),
    ("OpenSecureChannelResponse", 449, "response", [RS, ("ServerProtocolVersion", "UInt32"), ("SecurityToken", "struct:ChannelSecurityToken"),
        ("ServerNonce", "ByteString")]),
    ("CloseSecureChannelRequest", 452, "request", [RH]),
    ("CloseSecureChannelResponse", 455, "response", [RS]),
    # Discovery
    ("ApplicationDescription", 310, "struct", [("ApplicationUri", "String"), ("ProductUri", "String"), ("ApplicationName", "LocalizedText"),
        ("ApplicationType", "enum:ApplicationType"), ("GatewayServerUri", "String"), ("DiscoveryProfileUri", "String"), ("DiscoveryUrls", "String[]")]),
    ("UserTokenPolicy", 306, "struct", [("PolicyId", "String"), ("TokenType", "enum:UserTokenType"), ("IssuedTokenType", "String"),
        ("IssuerEndpointUrl", "String"), ("SecurityPolicyUri", "String")]),
    ("EndpointDescription", 314, "struct", [("EndpointUrl", "String"), ("Server", "struct:ApplicationDescription"), ("ServerCertificate", "ByteString"),
        ("SecurityMode", "enum:MessageSecurityMode"), ("SecurityPolicyUri", "String"), ("UserIdentityTokens", "struct:UserTokenPolicy[]"),
        ("TransportProfileUri", "String"), ("SecurityLevel", "Byte")]),
    ("FindServersRequest", 422, "request", [RH, ("EndpointUrl", "String"), ("LocaleIds", "String[]"), ("ServerUris", "String[]")]),
    ("FindServersResponse", 425, "response", [RS, ("Servers", "struct:ApplicationDescription[]")]),
    ("GetEndpointsRequest", 428, "request", [RH, ("EndpointUrl", "String"), ("LocaleIds", "String[]"), ("ProfileUris", "String[]")]),
    ("GetEndpointsResponse", 431, "response", [RS, ("Endpoints", "struct:EndpointDescription[]")]),
    # Session
    ("SignedSoftwareCertificate", 346, "struct", [("CertificateData", "ByteString"), ("Signature", "ByteString")]),
    ("SignatureData", 458, "struct", [("Algorithm", "String"), ("Signature", "ByteString")]),
    ("CreateSessionRequest", 461, "request", [RH, ("ClientDescription", "struct:ApplicationDescription"), ("ServerUri", "String"),
        ("EndpointUrl", "String"), ("SessionName", "String"), ("ClientNonce", "ByteString"), ("ClientCertificate", "ByteString"),
        ("RequestedSessionTimeout", "Double"), ("MaxResponseMessageSize", "UInt32")]),
    ("CreateSessionResponse", 464, "response", [RS, ("SessionId", "NodeId"), ("AuthenticationToken", "NodeId"), ("RevisedSessionTimeout", "Double"),
        ("ServerNonce", "ByteString"), ("ServerCertificate", "ByteString"), ("ServerEndpoints", "struct:EndpointDescription[]"),
        ("ServerSoftwareCertificates", "struct:SignedSoftwareCertificate[]"), ("ServerSignature", "struct:SignatureData"),
        ("MaxRequestMessageSize", "UInt32")]),
    ("AnonymousIdentityToken", 321, "struct", [("PolicyId", "String")]),
    ("UserNameIdentityToken", 324, "struct", [("PolicyId", "String"), ("UserName", "String"), ("Password", "ByteString"),
        ("EncryptionAlgorithm", "String")]),
    ("ActivateSessionRequest", 467, "request", [RH, ("ClientSignature", "struct:SignatureData"),
        ("ClientSoftwareCertificates", "struct:SignedSoftwareCertificate[]"), ("LocaleIds", "String[]"), ("UserIdentityToken", "ExtensionObject"),
        ("UserTokenSignature", "struct:SignatureData")]),
    ("ActivateSessionResponse", 470, "response", [RS, ("ServerNonce", "ByteString"), ("Results", "StatusCode[]"), DI]),
    ("CloseSessionRequest", 473, "request", [RH, ("DeleteSubscriptions", "Boolean")]),
    ("CloseSessionResponse", 476, "response", [RS]),
    ("CancelRequest", 479, "request", [RH, ("RequestHandle", "UInt32")]),
    ("CancelResponse", 482, "response", [RS, ("CancelCount", "UInt32")]),
    # View
    ("ViewDescription", 513, "struct", [("ViewId", "NodeId"), ("Timestamp", "DateTime"), ("ViewVersion", "UInt32")]),
    ("BrowseDescription", 516, "struct", [("NodeId", "NodeId"), ("BrowseDirection", "enum:BrowseDirection"), ("ReferenceTypeId", "NodeId"),
        ("IncludeSubtypes", "Boolean"), ("NodeClassMask", "UInt32"), ("ResultMask", "UInt32")]),
    ("ReferenceDescription", 520, "struct", [("ReferenceTypeId", "NodeId"), ("IsForward", "Boolean"), ("NodeId", "ExpandedNodeId"),
        ("BrowseName", "QualifiedName"), ("DisplayName", "LocalizedText"), ("NodeClass", "enum:NodeClass"), ("TypeDefinition", "ExpandedNodeId")]),
    ("BrowseResult", 524, "struct", [("StatusCode", "StatusCode"), ("ContinuationPoint", "ByteString"), ("References", "struct:ReferenceDescription[]")]),
    ("BrowseRequest", 527, "request", [RH, ("View", "struct:ViewDescription"), ("RequestedMaxReferencesPerNode", "UInt32"),
        ("NodesToBrowse", "struct:BrowseDescription[]")]),
    ("BrowseResponse", 530, "response", [RS, ("Results", "struct:BrowseResult[]"), DI]),
    ("BrowseNextRequest", 533, "request", [RH, ("ReleaseContinuationPoints", "Boolean"), ("ContinuationPoints", "ByteString[]")]),
    ("BrowseNextResponse", 536, "response", [RS, ("Results", "struct:BrowseResult[]"), DI]),
    ("RelativePathElement", 539, "struct", [("ReferenceTypeId", "NodeId"), ("IsInverse", "Boolean"), ("IncludeSubtypes", "Boolean"),
        ("TargetName", "QualifiedName")]),
    ("RelativePath", 542, "struct", [("Elements", "struct:RelativePathElement[]")]),
    ("BrowsePath", 545, "struct", [("StartingNode", "NodeId"), ("RelativePath", "struct:RelativePath")]),
    ("BrowsePathTarget", 548, "struct", [("TargetId", "ExpandedNodeId"), ("RemainingPathIndex", "UInt32")]),
    ("BrowsePathResult", 551, "struct", [("StatusCode", "StatusCode"), ("Targets", "struct:BrowsePathTarget[]")]),
    ("TranslateBrowsePathsToNodeIdsRequest", 554, "request", [RH, ("BrowsePaths", "struct:BrowsePath[]")]),
    ("TranslateBrowsePathsToNodeIdsResponse", 557, "response", [RS, ("Results", "struct:BrowsePathResult[]"), DI]),
    ("RegisterNodesRequest", 560, "request", [RH, ("NodesToRegister", "NodeId[]")]),
    ("RegisterNodesResponse", 563, "response", [RS, ("RegisteredNodeIds", "NodeId[]")]),
    ("UnregisterNodesRequest", 566, "request", [RH, ("NodesToUnregister", "NodeId[]")]),
    ("UnregisterNodesResponse", 569, "response", [RS]),
    # Attribute
    ("ReadValueId", 628, "struct", [("NodeId", "NodeId"), ("AttributeId", "UInt32"), ("IndexRange", "String"), ("DataEncoding", "QualifiedName")]),
    ("ReadRequest", 631, "request", [RH, ("MaxAge", "Double"), ("TimestampsToReturn", "enum:TimestampsToReturn"), ("NodesToRead", "struct:ReadValueId[]")]),
    ("ReadResponse", 634, "response", [RS, ("Results", "DataValue[]"), DI]),
    # Monitored items
    ("DataChangeFilter", 724, "struct", [("Trigger", "enum:DataChangeTrigger"), ("DeadbandType", "UInt32"), ("DeadbandValue", "Double")]),
    ("MonitoringParameters", 742, "struct", [("ClientHandle", "UInt32"), ("SamplingInterval", "Double"), ("Filter", "ExtensionObject"),
        ("QueueSize", "UInt32"), ("DiscardOldest", "Boolean")]),
    ("MonitoredItemCreateRequest", 745, "struct", [("ItemToMonitor", "struct:ReadValueId"), ("MonitoringMode", "enum:MonitoringMode"),
        ("RequestedParameters", "struct:MonitoringParameters")]),
    ("MonitoredItemCreateResult", 748, "struct", [("StatusCode", "StatusCode"), ("MonitoredItemId", "UInt32"), ("RevisedSamplingInterval", "Double"),
        ("RevisedQueueSize", "UInt32"), ("FilterResult", "ExtensionObject")]),
    ("CreateMonitoredItemsRequest", 751, "request", [RH, ("SubscriptionId", "UInt32"), ("TimestampsToReturn", "enum:TimestampsToReturn"),
        ("ItemsToCreate", "struct:MonitoredItemCreateRequest[]")]),
    ("CreateMonitoredItemsResponse", 754, "response", [RS, ("Results", "struct:MonitoredItemCreateResult[]"), DI]),
    ("MonitoredItemModifyRequest", 757, "struct", [("MonitoredItemId", "UInt32"), ("RequestedParameters", "struct:MonitoringParameters")]),
    ("MonitoredItemModifyResult", 760, "struct", [("StatusCode", "StatusCode"), ("RevisedSamplingInterval", "Double"), ("RevisedQueueSize", "UInt32"),
        ("FilterResult", "ExtensionObject")]),
    ("ModifyMonitoredItemsRequest", 763, "request", [RH, ("SubscriptionId", "UInt32"), ("TimestampsToReturn", "enum:TimestampsToReturn"),
        ("ItemsToModify", "struct:MonitoredItemModifyRequest[]")]),
    ("ModifyMonitoredItemsResponse", 766, "response", [RS, ("Results", "struct:MonitoredItemModifyResult[]"), DI]),
    ("SetMonitoringModeRequest", 769, "request", [RH, ("SubscriptionId", "UInt32"), ("MonitoringMode", "enum:MonitoringMode"),
        ("MonitoredItemIds", "UInt32[]")]),
    ("SetMonitoringModeResponse", 772, "response", [RS, ("Results", "StatusCode[]"), DI]),
    ("DeleteMonitoredItemsRequest", 781, "request", [RH, ("SubscriptionId", "UInt32"), ("MonitoredItemIds", "UInt32[]")]),
    ("DeleteMonitoredItemsResponse", 784, "response", [RS, ("Results", "StatusCode[]"), DI]),
    # Subscriptions
    ("CreateSubscriptionRequest", 787, "request", [RH, ("RequestedPublishingInterval", "Double"), ("RequestedLifetimeCount", "UInt32"),
        ("RequestedMaxKeepAliveCount", "UInt32"), ("MaxNotificationsPerPublish", "UInt32"), ("PublishingEnabled", "Boolean"), ("Priority", "Byte")]),
    ("CreateSubscriptionResponse", 790, "response", [RS, ("SubscriptionId", "UInt32"), ("RevisedPublishingInterval", "Double"),
        ("RevisedLifetimeCount", "UInt32"), ("RevisedMaxKeepAliveCount", "UInt32")]),
    ("ModifySubscriptionRequest", 793, "request", [RH, ("SubscriptionId", "UInt32"), ("RequestedPublishingInterval", "Double"),
        ("RequestedLifetimeCount", "UInt32"), ("RequestedMaxKeepAliveCount", "UInt32"), ("MaxNotificationsPerPublish", "UInt32"), ("Priority", "Byte")]),
    ("ModifySubscriptionResponse", 796, "response", [RS, ("RevisedPublishingInterval", "Double"), ("RevisedLifetimeCount", "UInt32"),
        ("RevisedMaxKeepAliveCount", "UInt32")]),
    ("SetPublishingModeRequest", 799, "request", [RH, ("PublishingEnabled", "Boolean"), ("SubscriptionIds", "UInt32[]")]),
    ("SetPublishingModeResponse", 802, "response", [RS, ("Results", "StatusCode[]"), DI]),
    ("NotificationMessage", 805, "struct", [("SequenceNumber", "UInt32"), ("PublishTime", "DateTime"), ("NotificationData", "ExtensionObject[]")]),
    ("MonitoredItemNotification", 808, "struct", [("ClientHandle", "UInt32"), ("Value", "DataValue")]),
    ("DataChangeNotification", 811, "struct", [("MonitoredItems", "struct:MonitoredItemNotification[]"), DI]),
    ("StatusChangeNotification", 820, "struct", [("Status", "StatusCode"), ("DiagnosticInfo", "DiagnosticInfo")]),
    ("EventFieldList", 919, "struct", [("ClientHandle", "UInt32"), ("EventFields", "Variant[]")]),
    ("EventNotificationList", 916, "struct", [("Events", "struct:EventFieldList[]")]),
    ("SubscriptionAcknowledgement", 823, "struct", [("SubscriptionId", "UInt32"), ("SequenceNumber", "UInt32")]),
    ("PublishRequest", 826, "request", [RH, ("SubscriptionAcknowledgements", "struct:SubscriptionAcknowledgement[]")]),
    ("PublishResponse", 829, "response", [RS, ("SubscriptionId", "UInt32"), ("AvailableSequenceNumbers", "UInt32[]"),
        ("MoreNotifications", "Boolean"), ("NotificationMessage", "struct:NotificationMessage"), ("Results", "StatusCode[]"), DI]),
    ("RepublishRequest", 832, "request", [RH, ("SubscriptionId", "UInt32"), ("RetransmitSequenceNumber", "UInt32")]),
    ("RepublishResponse", 835, "response", [RS, ("NotificationMessage", "struct:NotificationMessage")]),
    ("TransferResult", 838, "struct", [("StatusCode", "StatusCode"), ("AvailableSequenceNumbers", "UInt32[]")]),
    ("TransferSubscriptionsRequest", 841, "request", [RH, ("SubscriptionIds", "UInt32[]"), ("SendInitialValues", "Boolean")]),
    ("TransferSubscriptionsResponse", 844, "response", [RS, ("Results", "struct:TransferResult[]"), DI]),
    ("DeleteSubscriptionsRequest", 847, "request", [RH, ("SubscriptionIds", "UInt32[]")]),
    ("DeleteSubscriptionsResponse", 850, "response", [RS, ("Results", "StatusCode[]"), DI]),
    # Data types of the address space
    ("BuildInfo", 340, "struct", [("ProductUri", "String"), ("ManufacturerName", "String"), ("ProductName", "String"),
        ("SoftwareVersion", "String"), ("BuildNumber", "String"), ("BuildDate", "DateTime")]),
    ("ServerStatusDataType", 864, "struct", [("StartTime", "DateTime"), ("CurrentTime", "DateTime"), ("State", "enum:ServerState"),
        ("BuildInfo", "struct:BuildInfo"), ("SecondsTillShutdown", "UInt32"), ("ShutdownReason", "LocalizedText")]),
    ("Range", 886, "struct", [("Low", "Double"), ("High", "Double")]),
    ("EUInformation", 889, "struct", [("NamespaceUri", "String"), ("UnitId", "Int32"), ("DisplayName", "LocalizedText"),
        ("Description", "LocalizedText")]),
]

PRIM = {
    "Boolean": ("bool", "false", 1), "SByte": ("sbyte", "0", 1), "Byte": ("byte", "0", 1), "Int16": ("short", "0", 2),
    "UInt16": ("ushort", "0", 2), "Int32": ("int", "0", 4), "UInt32": ("uint", "0", 4), "Int64": ("long", "0", 8),
    "UInt64": ("ulong", "0", 8), "Float": ("float", "0", 4), "Double": ("double", "0", 8), "String": ("string?", "null", 4),
    "DateTime": ("DateTime", "DateTime.MinValue", 8), "Guid": ("Guid", "Guid.Empty", 16), "ByteString": ("byte[]?", "null", 4),
    "NodeId": ("NodeId", "default", 2), "ExpandedNodeId": ("ExpandedNodeId", "default", 2), "StatusCode": ("StatusCode", "default", 4),
    "QualifiedName": ("QualifiedName", "default", 6), "LocalizedText": ("LocalizedText", "default", 1),
    "ExtensionObject": ("ExtensionObject", "ExtensionObject.Null", 3), "DataValue": ("DataValue", "new()", 1), "Variant": ("Variant", "default", 1),
    "DiagnosticInfo": ("DiagnosticInfo?", "null", 1),
}

def cs_type(t):
    arr = t.endswith("[]")
    base = t[:-2] if arr else t
    if base.startswith("enum:"):
        c = base[5:]; default = f"{c}.{ENUMS[c][1][0][0]}"; size = 4
    elif base.startswith("struct:"):
        c = base[7:]; default = "new()"; size = 1
    else:
        c, default, size = PRIM[base]
    if arr:
        elem = c.rstrip("?") if base in ("DiagnosticInfo",) else c
        return elem + "[]", "[]", size, base, elem
    return c, default, size, base, c

def read_expr(base, cname, what):
    if base.startswith("enum:"):
        return f"({cname})reader.ReadInt32()"
    if base.startswith("struct:"):
        return None
    return f"reader.Read{base}()"

def write_stmt(base, expr):
    if base.startswith("enum:"):
        return f"writer.WriteInt32((int){expr});"
    if base.startswith("struct:"):
        return f"{expr}.Encode(writer);"
    return f"writer.Write{base}({expr});"

EXTENSION_OBJECT_TYPES = {"AnonymousIdentityToken", "UserNameIdentityToken", "DataChangeFilter", "DataChangeNotification",
    "StatusChangeNotification", "EventNotificationList", "ServerStatusDataType", "BuildInfo", "Range", "EUInformation"}

def registered(name, kind):
    return kind in ("request", "response") or name in EXTENSION_OBJECT_TYPES

def gen_type(name, eid, kind, fields):
    if not registered(name, kind):
        eid = 0
    iface = "IEncodeable"
    if kind == "request":
        iface = "IServiceRequest"
    elif kind == "response":
        iface = "IServiceResponse"
    L = ["// Generated by generate_messages.py from its table: edit the table and regenerate, not this file.",
         "namespace Tieflow.OpcUa.Encoding;", "",
         (f"/// <summary>{name} (UA Binary encoding id {eid}).</summary>" if eid else f"/// <summary>{name} (only encoded inside other structures, never as an ExtensionObject).</summary>"),
         f"internal sealed class {name} : {iface}", "{",
         f"    public const uint EncodingId = {eid};", "",
         "    public uint BinaryEncodingId => EncodingId;", ""]
    for fname, ftype in fields:
        ct, default, _, _, _ = cs_type(ftype)
        init = "" if default in ("0", "false", "default") else f" = {default};"
        L.append(f"    public {ct} {fname} {{ get; set; }}{init}")
        L.append("")
    L.append("    public void Encode(UaBinaryWriter writer)")
    L.append("    {")
    for fname, ftype in fields:
        ct, default, size, base, elem = cs_type(ftype)
        if ftype.endswith("[]"):
            L.append(f"        writer.WriteInt32({fname}.Length);")
            L.append(f"        foreach (var item in {fname})")
            L.append("        {")
            L.append("            " + write_stmt(base, "item"))
            L.append("        }")
            L.append("")
        else:
            L.append("        " + write_stmt(base, fname))
    if L[-1] == "":
        L.pop()
    L.append("    }")
    L.append("")
    L.append("    public void Decode(UaBinaryReader reader)")
    L.append("    {")
    for fname, ftype in fields:
        ct, default, size, base, elem = cs_type(ftype)
        if ftype.endswith("[]"):
            var = fname[0].lower() + fname[1:] + "Count"
            L.append(f"        var {var} = reader.ReadArrayLength(\"{name}.{fname}\", {size});")
            L.append(f"        {fname} = {var} <= 0 ? [] : new {elem.rstrip('?') if elem.endswith('?') and base not in ('String', 'ByteString') else elem}[{var}];")
            L.append(f"        for (var i = 0; i < {fname}.Length; i++)")
            L.append("        {")
            if base.startswith("struct:"):
                L.append(f"            var item = new {elem}();")
                L.append("            item.Decode(reader);")
                L.append(f"            {fname}[i] = item;")
            else:
                L.append(f"            {fname}[i] = {read_expr(base, elem, fname)};")
            L.append("        }")
            L.append("")
        else:
            if base.startswith("struct:"):
                L.append(f"        {fname} = new {ct}();")
                L.append(f"        {fname}.Decode(reader);")
            else:
                L.append(f"        {fname} = {read_expr(base, ct, fname)};")
    if L[-1] == "":
        L.pop()
    L.append("    }")
    L.append("}")
    return "\n".join(L) + "\n"

def gen_enum(name, doc, members):
    L = ["// Generated by generate_messages.py from its table: edit the table and regenerate, not this file.",
         "namespace Tieflow.OpcUa.Encoding;", "", f"/// <summary>{doc}</summary>", f"public enum {name}", "{"]
    for i, (m, v, d) in enumerate(members):
        L.append(f"    /// <summary>{d}</summary>")
        L.append(f"    {m} = {v},")
        if i != len(members) - 1:
            L.append("")
    L.append("}")
    return "\n".join(L) + "\n"

def gen_registry():
    L = ["// Generated by generate_messages.py from its table: edit the table and regenerate, not this file.",
         "using System.Diagnostics.CodeAnalysis;", "",
         "namespace Tieflow.OpcUa.Encoding;", "",
         "/// <summary>Creates the structure for a binary encoding id (namespace 0) when this library knows it.</summary>",
         "internal static class EncodeableTypes", "{",
         "    public static bool TryCreate(uint encodingId, [NotNullWhen(true)] out IEncodeable? value)", "    {",
         "        value = encodingId switch", "        {"]
    for name, eid, kind, fields in TYPES:
        if not registered(name, kind):
            continue
        L.append(f"            {eid} => new {name}(),")
    L += ["            _ => null,", "        };", "        return value is not null;", "    }", "}"]
    return "\n".join(L) + "\n"

here = os.path.dirname(os.path.abspath(__file__))
for name, eid, kind, fields in TYPES:
    open(os.path.join(here, name + ".cs"), "w").write(gen_type(name, eid, kind, fields))
for name, (doc, members) in ENUMS.items():
    open(os.path.join(here, name + ".cs"), "w").write(gen_enum(name, doc, members))
open(os.path.join(here, "EncodeableTypes.cs"), "w").write(gen_registry())
