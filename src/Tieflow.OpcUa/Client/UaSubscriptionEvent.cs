namespace Tieflow.OpcUa.Client;

/// <summary>Something a subscription reports: a <see cref="UaDataChange"/> or a <see cref="UaDataGap"/>.</summary>
public abstract record UaSubscriptionEvent;
