package org.cruxset.scoring.testing;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertInstanceOf;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.junit.jupiter.api.Test;
import org.opentest4j.AssertionFailedError;
import org.opentest4j.TestAbortedException;

class ExternalToolsTest {
    @Test
    void missingModuleFailsUnderCiAndAbortsWithAReasonOtherwise() {
        Throwable t = assertThrows(Throwable.class, () -> ExternalTools.requirePython("cruxset_no_such_module"));
        if (ExternalTools.underCi()) {
            assertInstanceOf(AssertionFailedError.class, t);
        } else {
            assertInstanceOf(TestAbortedException.class, t);
        }
        assertTrue(t.getMessage().contains("apt-get install python3-cruxset_no_such_module"), t.getMessage());
    }

    @Test
    void debianPackageNamesFollowDebianConventions() {
        assertEquals("python3-numpy", ExternalTools.debianPackage("numpy"));
        assertEquals("python3-numpy", ExternalTools.debianPackage("numpy.lib.format"));
        assertEquals("python3-sklearn", ExternalTools.debianPackage("sklearn"));
    }
}
