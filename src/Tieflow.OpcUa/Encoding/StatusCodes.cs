namespace Tieflow.OpcUa.Encoding;

/// <summary>
/// The status codes Tieflow names (values from the OPC Foundation's StatusCode.csv, as summarised in
/// docs/opcua.md §1.15). Names are the Foundation's symbols without the underscore.
/// </summary>
public static class StatusCodes
{
    /// <summary>Good (0x00000000).</summary>
    public static readonly StatusCode Good = new(0x00000000u);

    /// <summary>GoodSubscriptionTransferred (0x002D0000).</summary>
    public static readonly StatusCode GoodSubscriptionTransferred = new(0x002D0000u);

    /// <summary>GoodCompletesAsynchronously (0x002E0000).</summary>
    public static readonly StatusCode GoodCompletesAsynchronously = new(0x002E0000u);

    /// <summary>GoodOverload (0x002F0000).</summary>
    public static readonly StatusCode GoodOverload = new(0x002F0000u);

    /// <summary>Uncertain (0x40000000).</summary>
    public static readonly StatusCode Uncertain = new(0x40000000u);

    /// <summary>UncertainLastUsableValue (0x40900000).</summary>
    public static readonly StatusCode UncertainLastUsableValue = new(0x40900000u);

    /// <summary>UncertainNoCommunicationLastUsableValue (0x408F0000).</summary>
    public static readonly StatusCode UncertainNoCommunicationLastUsableValue = new(0x408F0000u);

    /// <summary>UncertainSubstituteValue (0x40910000).</summary>
    public static readonly StatusCode UncertainSubstituteValue = new(0x40910000u);

    /// <summary>UncertainInitialValue (0x40920000).</summary>
    public static readonly StatusCode UncertainInitialValue = new(0x40920000u);

    /// <summary>UncertainSensorNotAccurate (0x40930000).</summary>
    public static readonly StatusCode UncertainSensorNotAccurate = new(0x40930000u);

    /// <summary>UncertainEngineeringUnitsExceeded (0x40940000).</summary>
    public static readonly StatusCode UncertainEngineeringUnitsExceeded = new(0x40940000u);

    /// <summary>UncertainSubNormal (0x40950000).</summary>
    public static readonly StatusCode UncertainSubNormal = new(0x40950000u);

    /// <summary>Bad (0x80000000).</summary>
    public static readonly StatusCode Bad = new(0x80000000u);

    /// <summary>BadUnexpectedError (0x80010000).</summary>
    public static readonly StatusCode BadUnexpectedError = new(0x80010000u);

    /// <summary>BadInternalError (0x80020000).</summary>
    public static readonly StatusCode BadInternalError = new(0x80020000u);

    /// <summary>BadOutOfMemory (0x80030000).</summary>
    public static readonly StatusCode BadOutOfMemory = new(0x80030000u);

    /// <summary>BadResourceUnavailable (0x80040000).</summary>
    public static readonly StatusCode BadResourceUnavailable = new(0x80040000u);

    /// <summary>BadCommunicationError (0x80050000).</summary>
    public static readonly StatusCode BadCommunicationError = new(0x80050000u);

    /// <summary>BadEncodingError (0x80060000).</summary>
    public static readonly StatusCode BadEncodingError = new(0x80060000u);

    /// <summary>BadDecodingError (0x80070000).</summary>
    public static readonly StatusCode BadDecodingError = new(0x80070000u);

    /// <summary>BadEncodingLimitsExceeded (0x80080000).</summary>
    public static readonly StatusCode BadEncodingLimitsExceeded = new(0x80080000u);

    /// <summary>BadUnknownResponse (0x80090000).</summary>
    public static readonly StatusCode BadUnknownResponse = new(0x80090000u);

    /// <summary>BadTimeout (0x800A0000).</summary>
    public static readonly StatusCode BadTimeout = new(0x800A0000u);

    /// <summary>BadServiceUnsupported (0x800B0000).</summary>
    public static readonly StatusCode BadServiceUnsupported = new(0x800B0000u);

    /// <summary>BadShutdown (0x800C0000).</summary>
    public static readonly StatusCode BadShutdown = new(0x800C0000u);

    /// <summary>BadServerNotConnected (0x800D0000).</summary>
    public static readonly StatusCode BadServerNotConnected = new(0x800D0000u);

    /// <summary>BadServerHalted (0x800E0000).</summary>
    public static readonly StatusCode BadServerHalted = new(0x800E0000u);

    /// <summary>BadNothingToDo (0x800F0000).</summary>
    public static readonly StatusCode BadNothingToDo = new(0x800F0000u);

    /// <summary>BadTooManyOperations (0x80100000).</summary>
    public static readonly StatusCode BadTooManyOperations = new(0x80100000u);

    /// <summary>BadSecurityChecksFailed (0x80130000).</summary>
    public static readonly StatusCode BadSecurityChecksFailed = new(0x80130000u);

    /// <summary>BadCertificateHostNameInvalid (0x80160000).</summary>
    public static readonly StatusCode BadCertificateHostNameInvalid = new(0x80160000u);

    /// <summary>BadCertificateUntrusted (0x801A0000).</summary>
    public static readonly StatusCode BadCertificateUntrusted = new(0x801A0000u);

    /// <summary>BadUserAccessDenied (0x801F0000).</summary>
    public static readonly StatusCode BadUserAccessDenied = new(0x801F0000u);

    /// <summary>BadIdentityTokenInvalid (0x80200000).</summary>
    public static readonly StatusCode BadIdentityTokenInvalid = new(0x80200000u);

    /// <summary>BadIdentityTokenRejected (0x80210000).</summary>
    public static readonly StatusCode BadIdentityTokenRejected = new(0x80210000u);

    /// <summary>BadSecureChannelIdInvalid (0x80220000).</summary>
    public static readonly StatusCode BadSecureChannelIdInvalid = new(0x80220000u);

    /// <summary>BadSessionIdInvalid (0x80250000).</summary>
    public static readonly StatusCode BadSessionIdInvalid = new(0x80250000u);

    /// <summary>BadSessionClosed (0x80260000).</summary>
    public static readonly StatusCode BadSessionClosed = new(0x80260000u);

    /// <summary>BadSessionNotActivated (0x80270000).</summary>
    public static readonly StatusCode BadSessionNotActivated = new(0x80270000u);

    /// <summary>BadSubscriptionIdInvalid (0x80280000).</summary>
    public static readonly StatusCode BadSubscriptionIdInvalid = new(0x80280000u);

    /// <summary>BadWaitingForInitialData (0x80320000).</summary>
    public static readonly StatusCode BadWaitingForInitialData = new(0x80320000u);

    /// <summary>BadNodeIdInvalid (0x80330000).</summary>
    public static readonly StatusCode BadNodeIdInvalid = new(0x80330000u);

    /// <summary>BadNodeIdUnknown (0x80340000).</summary>
    public static readonly StatusCode BadNodeIdUnknown = new(0x80340000u);

    /// <summary>BadAttributeIdInvalid (0x80350000).</summary>
    public static readonly StatusCode BadAttributeIdInvalid = new(0x80350000u);

    /// <summary>BadIndexRangeInvalid (0x80360000).</summary>
    public static readonly StatusCode BadIndexRangeInvalid = new(0x80360000u);

    /// <summary>BadNotReadable (0x803A0000).</summary>
    public static readonly StatusCode BadNotReadable = new(0x803A0000u);

    /// <summary>BadNotWritable (0x803B0000).</summary>
    public static readonly StatusCode BadNotWritable = new(0x803B0000u);

    /// <summary>BadMonitoredItemIdInvalid (0x80420000).</summary>
    public static readonly StatusCode BadMonitoredItemIdInvalid = new(0x80420000u);

    /// <summary>BadMonitoredItemFilterInvalid (0x80430000).</summary>
    public static readonly StatusCode BadMonitoredItemFilterInvalid = new(0x80430000u);

    /// <summary>BadMonitoredItemFilterUnsupported (0x80440000).</summary>
    public static readonly StatusCode BadMonitoredItemFilterUnsupported = new(0x80440000u);

    /// <summary>BadFilterNotAllowed (0x80450000).</summary>
    public static readonly StatusCode BadFilterNotAllowed = new(0x80450000u);

    /// <summary>BadContinuationPointInvalid (0x804A0000).</summary>
    public static readonly StatusCode BadContinuationPointInvalid = new(0x804A0000u);

    /// <summary>BadNoContinuationPoints (0x804B0000).</summary>
    public static readonly StatusCode BadNoContinuationPoints = new(0x804B0000u);

    /// <summary>BadSecurityModeRejected (0x80540000).</summary>
    public static readonly StatusCode BadSecurityModeRejected = new(0x80540000u);

    /// <summary>BadSecurityPolicyRejected (0x80550000).</summary>
    public static readonly StatusCode BadSecurityPolicyRejected = new(0x80550000u);

    /// <summary>BadTooManySessions (0x80560000).</summary>
    public static readonly StatusCode BadTooManySessions = new(0x80560000u);

    /// <summary>BadBrowseNameInvalid (0x80600000).</summary>
    public static readonly StatusCode BadBrowseNameInvalid = new(0x80600000u);

    /// <summary>BadNoMatch (0x806F0000).</summary>
    public static readonly StatusCode BadNoMatch = new(0x806F0000u);

    /// <summary>BadTooManySubscriptions (0x80770000).</summary>
    public static readonly StatusCode BadTooManySubscriptions = new(0x80770000u);

    /// <summary>BadTooManyPublishRequests (0x80780000).</summary>
    public static readonly StatusCode BadTooManyPublishRequests = new(0x80780000u);

    /// <summary>BadNoSubscription (0x80790000).</summary>
    public static readonly StatusCode BadNoSubscription = new(0x80790000u);

    /// <summary>BadSequenceNumberUnknown (0x807A0000).</summary>
    public static readonly StatusCode BadSequenceNumberUnknown = new(0x807A0000u);

    /// <summary>BadMessageNotAvailable (0x807B0000).</summary>
    public static readonly StatusCode BadMessageNotAvailable = new(0x807B0000u);

    /// <summary>BadTcpServerTooBusy (0x807D0000).</summary>
    public static readonly StatusCode BadTcpServerTooBusy = new(0x807D0000u);

    /// <summary>BadTcpMessageTypeInvalid (0x807E0000).</summary>
    public static readonly StatusCode BadTcpMessageTypeInvalid = new(0x807E0000u);

    /// <summary>BadTcpSecureChannelUnknown (0x807F0000).</summary>
    public static readonly StatusCode BadTcpSecureChannelUnknown = new(0x807F0000u);

    /// <summary>BadTcpMessageTooLarge (0x80800000).</summary>
    public static readonly StatusCode BadTcpMessageTooLarge = new(0x80800000u);

    /// <summary>BadTcpNotEnoughResources (0x80810000).</summary>
    public static readonly StatusCode BadTcpNotEnoughResources = new(0x80810000u);

    /// <summary>BadTcpInternalError (0x80820000).</summary>
    public static readonly StatusCode BadTcpInternalError = new(0x80820000u);

    /// <summary>BadTcpEndpointUrlInvalid (0x80830000).</summary>
    public static readonly StatusCode BadTcpEndpointUrlInvalid = new(0x80830000u);

    /// <summary>BadRequestInterrupted (0x80840000).</summary>
    public static readonly StatusCode BadRequestInterrupted = new(0x80840000u);

    /// <summary>BadRequestTimeout (0x80850000).</summary>
    public static readonly StatusCode BadRequestTimeout = new(0x80850000u);

    /// <summary>BadSecureChannelClosed (0x80860000).</summary>
    public static readonly StatusCode BadSecureChannelClosed = new(0x80860000u);

    /// <summary>BadSecureChannelTokenUnknown (0x80870000).</summary>
    public static readonly StatusCode BadSecureChannelTokenUnknown = new(0x80870000u);

    /// <summary>BadSequenceNumberInvalid (0x80880000).</summary>
    public static readonly StatusCode BadSequenceNumberInvalid = new(0x80880000u);

    /// <summary>BadConfigurationError (0x80890000).</summary>
    public static readonly StatusCode BadConfigurationError = new(0x80890000u);

    /// <summary>BadNotConnected (0x808A0000).</summary>
    public static readonly StatusCode BadNotConnected = new(0x808A0000u);

    /// <summary>BadDeviceFailure (0x808B0000).</summary>
    public static readonly StatusCode BadDeviceFailure = new(0x808B0000u);

    /// <summary>BadSensorFailure (0x808C0000).</summary>
    public static readonly StatusCode BadSensorFailure = new(0x808C0000u);

    /// <summary>BadOutOfService (0x808D0000).</summary>
    public static readonly StatusCode BadOutOfService = new(0x808D0000u);

    /// <summary>BadDeadbandFilterInvalid (0x808E0000).</summary>
    public static readonly StatusCode BadDeadbandFilterInvalid = new(0x808E0000u);

    /// <summary>BadConnectionRejected (0x80AC0000).</summary>
    public static readonly StatusCode BadConnectionRejected = new(0x80AC0000u);

    /// <summary>BadDisconnect (0x80AD0000).</summary>
    public static readonly StatusCode BadDisconnect = new(0x80AD0000u);

    /// <summary>BadConnectionClosed (0x80AE0000).</summary>
    public static readonly StatusCode BadConnectionClosed = new(0x80AE0000u);

    /// <summary>BadInvalidState (0x80AF0000).</summary>
    public static readonly StatusCode BadInvalidState = new(0x80AF0000u);

    /// <summary>BadRequestTooLarge (0x80B80000).</summary>
    public static readonly StatusCode BadRequestTooLarge = new(0x80B80000u);

    /// <summary>BadResponseTooLarge (0x80B90000).</summary>
    public static readonly StatusCode BadResponseTooLarge = new(0x80B90000u);

    /// <summary>BadProtocolVersionUnsupported (0x80BE0000).</summary>
    public static readonly StatusCode BadProtocolVersionUnsupported = new(0x80BE0000u);

    private static readonly Dictionary<uint, string> Names = new()
    {
        [0x00000000u] = nameof(Good),
        [0x002D0000u] = nameof(GoodSubscriptionTransferred),
        [0x002E0000u] = nameof(GoodCompletesAsynchronously),
        [0x002F0000u] = nameof(GoodOverload),
        [0x40000000u] = nameof(Uncertain),
        [0x40900000u] = nameof(UncertainLastUsableValue),
        [0x408F0000u] = nameof(UncertainNoCommunicationLastUsableValue),
        [0x40910000u] = nameof(UncertainSubstituteValue),
        [0x40920000u] = nameof(UncertainInitialValue),
        [0x40930000u] = nameof(UncertainSensorNotAccurate),
        [0x40940000u] = nameof(UncertainEngineeringUnitsExceeded),
        [0x40950000u] = nameof(UncertainSubNormal),
        [0x80000000u] = nameof(Bad),
        [0x80010000u] = nameof(BadUnexpectedError),
        [0x80020000u] = nameof(BadInternalError),
        [0x80030000u] = nameof(BadOutOfMemory),
        [0x80040000u] = nameof(BadResourceUnavailable),
        [0x80050000u] = nameof(BadCommunicationError),
        [0x80060000u] = nameof(BadEncodingError),
        [0x80070000u] = nameof(BadDecodingError),
        [0x80080000u] = nameof(BadEncodingLimitsExceeded),
        [0x80090000u] = nameof(BadUnknownResponse),
        [0x800A0000u] = nameof(BadTimeout),
        [0x800B0000u] = nameof(BadServiceUnsupported),
        [0x800C0000u] = nameof(BadShutdown),
        [0x800D0000u] = nameof(BadServerNotConnected),
        [0x800E0000u] = nameof(BadServerHalted),
        [0x800F0000u] = nameof(BadNothingToDo),
        [0x80100000u] = nameof(BadTooManyOperations),
        [0x80130000u] = nameof(BadSecurityChecksFailed),
        [0x80160000u] = nameof(BadCertificateHostNameInvalid),
        [0x801A0000u] = nameof(BadCertificateUntrusted),
        [0x801F0000u] = nameof(BadUserAccessDenied),
        [0x80200000u] = nameof(BadIdentityTokenInvalid),
        [0x80210000u] = nameof(BadIdentityTokenRejected),
        [0x80220000u] = nameof(BadSecureChannelIdInvalid),
        [0x80250000u] = nameof(BadSessionIdInvalid),
        [0x80260000u] = nameof(BadSessionClosed),
        [0x80270000u] = nameof(BadSessionNotActivated),
        [0x80280000u] = nameof(BadSubscriptionIdInvalid),
        [0x80320000u] = nameof(BadWaitingForInitialData),
        [0x80330000u] = nameof(BadNodeIdInvalid),
        [0x80340000u] = nameof(BadNodeIdUnknown),
        [0x80350000u] = nameof(BadAttributeIdInvalid),
        [0x80360000u] = nameof(BadIndexRangeInvalid),
        [0x803A0000u] = nameof(BadNotReadable),
        [0x803B0000u] = nameof(BadNotWritable),
        [0x80420000u] = nameof(BadMonitoredItemIdInvalid),
        [0x80430000u] = nameof(BadMonitoredItemFilterInvalid),
        [0x80440000u] = nameof(BadMonitoredItemFilterUnsupported),
        [0x80450000u] = nameof(BadFilterNotAllowed),
        [0x804A0000u] = nameof(BadContinuationPointInvalid),
        [0x804B0000u] = nameof(BadNoContinuationPoints),
        [0x80540000u] = nameof(BadSecurityModeRejected),
        [0x80550000u] = nameof(BadSecurityPolicyRejected),
        [0x80560000u] = nameof(BadTooManySessions),
        [0x80600000u] = nameof(BadBrowseNameInvalid),
        [0x806F0000u] = nameof(BadNoMatch),
        [0x80770000u] = nameof(BadTooManySubscriptions),
        [0x80780000u] = nameof(BadTooManyPublishRequests),
        [0x80790000u] = nameof(BadNoSubscription),
        [0x807A0000u] = nameof(BadSequenceNumberUnknown),
        [0x807B0000u] = nameof(BadMessageNotAvailable),
        [0x807D0000u] = nameof(BadTcpServerTooBusy),
        [0x807E0000u] = nameof(BadTcpMessageTypeInvalid),
        [0x807F0000u] = nameof(BadTcpSecureChannelUnknown),
        [0x80800000u] = nameof(BadTcpMessageTooLarge),
        [0x80810000u] = nameof(BadTcpNotEnoughResources),
        [0x80820000u] = nameof(BadTcpInternalError),
        [0x80830000u] = nameof(BadTcpEndpointUrlInvalid),
        [0x80840000u] = nameof(BadRequestInterrupted),
        [0x80850000u] = nameof(BadRequestTimeout),
        [0x80860000u] = nameof(BadSecureChannelClosed),
        [0x80870000u] = nameof(BadSecureChannelTokenUnknown),
        [0x80880000u] = nameof(BadSequenceNumberInvalid),
        [0x80890000u] = nameof(BadConfigurationError),
        [0x808A0000u] = nameof(BadNotConnected),
        [0x808B0000u] = nameof(BadDeviceFailure),
        [0x808C0000u] = nameof(BadSensorFailure),
        [0x808D0000u] = nameof(BadOutOfService),
        [0x808E0000u] = nameof(BadDeadbandFilterInvalid),
        [0x80AC0000u] = nameof(BadConnectionRejected),
        [0x80AD0000u] = nameof(BadDisconnect),
        [0x80AE0000u] = nameof(BadConnectionClosed),
        [0x80AF0000u] = nameof(BadInvalidState),
        [0x80B80000u] = nameof(BadRequestTooLarge),
        [0x80B90000u] = nameof(BadResponseTooLarge),
        [0x80BE0000u] = nameof(BadProtocolVersionUnsupported),
    };

    /// <summary>Looks up the symbolic name of a code (flag bits must already be cleared).</summary>
    /// <param name="codeWithoutFlags">The code with its low 16 bits cleared.</param>
    /// <param name="name">The name when found.</param>
    /// <returns>True when the code is in the table.</returns>
    public static bool TryGetName(uint codeWithoutFlags, [System.Diagnostics.CodeAnalysis.NotNullWhen(true)] out string? name) => Names.TryGetValue(codeWithoutFlags, out name);

    /// <summary>Looks up a code by its symbolic name (for example <c>BadSensorFailure</c>), case-insensitively.</summary>
    /// <param name="name">The name.</param>
    /// <param name="code">The code when found.</param>
    /// <returns>True when the name is in the table.</returns>
    public static bool TryParse(string name, out StatusCode code)
    {
        foreach (var pair in Names)
        {
            if (string.Equals(pair.Value, name, StringComparison.OrdinalIgnoreCase))
            {
                code = new StatusCode(pair.Key);
                return true;
            }
        }

        code = default;
        return false;
    }
}
