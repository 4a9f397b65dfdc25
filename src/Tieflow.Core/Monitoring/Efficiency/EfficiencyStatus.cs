namespace Tieflow.Core.Monitoring.Efficiency;

/// <summary>Whether a stage's efficiency could be said in a window.</summary>
public enum EfficiencyStatus
{
    /// <summary>Estimated, with a sigma below the stated bound.</summary>
    Determined,

    /// <summary>The streams were observable, but the driving force is too small (a pinched stage): the sigma exceeds the bound.</summary>
    NotDeterminable,

    /// <summary>The streams the efficiency needs are not observable from the instruments in this window.</summary>
    NotObservable,
}
